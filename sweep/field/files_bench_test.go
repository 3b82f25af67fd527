package field

import (
	"bytes"
	"fmt"
	"testing"
)

// BenchmarkFieldFiles times writing and reading a four-variable field in
// each format at 64^2 and 512^2 cells.
func BenchmarkFieldFiles(b *testing.B) {
	names := []string{"rho", "u", "v", "p"}
	for _, n := range []int{64, 512} {
		c := demoCells(names, n, n)
		var csvBuf, npyBuf bytes.Buffer
		WriteCSV(&csvBuf, c)
		WriteNPY(&npyBuf, c)
		b.Run(fmt.Sprintf("csv-write/%d", n), func(b *testing.B) {
			for b.Loop() {
				var w bytes.Buffer
				WriteCSV(&w, c)
			}
		})
		b.Run(fmt.Sprintf("csv-read/%d", n), func(b *testing.B) {
			for b.Loop() {
				if _, err := ReadCSV(bytes.NewReader(csvBuf.Bytes()), n, n); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run(fmt.Sprintf("npy-write/%d", n), func(b *testing.B) {
			for b.Loop() {
				var w bytes.Buffer
				WriteNPY(&w, c)
			}
		})
		b.Run(fmt.Sprintf("npy-read/%d", n), func(b *testing.B) {
			for b.Loop() {
				if _, err := ReadNPY(bytes.NewReader(npyBuf.Bytes()), names, n, n); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
