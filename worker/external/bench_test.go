package external

import (
	"context"
	"fmt"
	"runtime"
	"syscall"
	"testing"
	"time"

	"fvsweep/fv2d"
	"fvsweep/sweep/job"
	"fvsweep/sweep/manifest"
	"fvsweep/sweep/outside"
)

// BenchmarkOverhead times what fvsweep adds to one outside run: the
// working folder, the initial averages and the input file, the job file,
// starting the program, reading and checking its output, the errors
// against the exact averages and removing the folder. The program is cp,
// which copies the input to the output, so nearly all the time is the
// runner's. Vortex (Euler, four variables), quad = 3.
func BenchmarkOverhead(b *testing.B) {
	for _, format := range []string{manifest.NPY, manifest.CSV} {
		for _, n := range []int{64, 512} {
			b.Run(fmt.Sprintf("%s/%d", format, n), func(b *testing.B) {
				m := &manifest.Manifest{Name: "copy", Version: "1", Equation: manifest.Euler,
					Command: []string{"cp", "{input}", "{output}"}, Input: format, Output: format}
				if err := m.Check(); err != nil {
					b.Fatal(err)
				}
				r, err := New(m)
				if err != nil {
					b.Fatal(err)
				}
				kv := map[string]string{"nx": fmt.Sprint(n), "ny": fmt.Sprint(n)}
				run, err := outside.Resolve(m, "vortex", kv)
				if err != nil {
					b.Fatal(err)
				}
				jb := job.Job{ID: run.ID(), Case: "vortex", Solver: "copy", Params: kv}
				cpu0 := cpuTime()
				for b.Loop() {
					res, err := r.Run(context.Background(), jb)
					if err != nil || res.Outcome.Status != job.StatusDone {
						b.Fatal(err, res.Outcome.Error)
					}
				}
				b.ReportMetric((cpuTime()-cpu0).Seconds()*1e3/float64(b.N), "cpu-ms/op")
			})
		}
	}
}

// BenchmarkQuadrature times the part of BenchmarkOverhead that fv2d's own
// runs pay as well: the initial and the exact cell averages of the vortex
// (Gauss-Legendre, 3 x 3 points per cell), with the runner's goroutines.
func BenchmarkQuadrature(b *testing.B) {
	for _, n := range []int{64, 512} {
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			v, err := fv2d.Resolve("vortex", map[string]string{"nx": fmt.Sprint(n), "ny": fmt.Sprint(n)})
			if err != nil {
				b.Fatal(err)
			}
			p, err := fv2d.SetUp(v)
			if err != nil {
				b.Fatal(err)
			}
			threads := runtime.GOMAXPROCS(0)
			cpu0 := cpuTime()
			for b.Loop() {
				s := fv2d.InitialAverages(p, n, n, 3, threads)
				s.T = 2
				fv2d.ExactAverages(p, s, 3, threads)
			}
			b.ReportMetric((cpuTime()-cpu0).Seconds()*1e3/float64(b.N), "cpu-ms/op")
		})
	}
}

// cpuTime is the CPU time (user + system) of this process and its waited-for
// children: on a shared machine it shows the work done, not the queueing.
func cpuTime() time.Duration {
	var self, kids syscall.Rusage
	syscall.Getrusage(syscall.RUSAGE_SELF, &self)
	syscall.Getrusage(syscall.RUSAGE_CHILDREN, &kids)
	tv := func(t syscall.Timeval) time.Duration { return time.Duration(t.Nano()) }
	return tv(self.Utime) + tv(self.Stime) + tv(kids.Utime) + tv(kids.Stime)
}
