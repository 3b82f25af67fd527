package spec

import (
	"errors"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"fvsweep/fv2d"
	"fvsweep/sweep/job"
)

// FuzzParseSpec feeds arbitrary bytes to the spec parser. It must never
// panic; a refused spec gets a one-line *Error; an accepted one expands
// within the job limit into distinct, sorted jobs whose IDs match their
// parameters. Run in CI for a bounded time:
//
//	go test ./sweep/spec -run '^$' -fuzz FuzzParseSpec -fuzztime 30s
func FuzzParseSpec(f *testing.F) {
	f.Add([]byte(goodSpec))
	f.Add([]byte(study("case = \"spec-test-case\"\naxes = { limiter = [\"mc\", \"minmod\"] }\n" +
		"together = [{ k0 = [1, 2], amp = [0.1, 0.2] }]\nrefine = { nx = [8, 16] }\n")))
	f.Add([]byte(study("case = \"spec-test-case\"\n[[study.together]]\nflux = [\"hll\"]\n[study.refine]\nny = [4, 8]\n")))
	f.Add([]byte("name = \"t\"\n[[study]]\ncase = \"vortex\"\nfixed = { cfl = nan, nx = -4 }\n"))
	f.Add([]byte("name = \"t\"\n[[study]\n"))
	f.Add([]byte("name = 'x'\nstudy = [{ case = \"spec-test-case\", fixed.cfl = 0.5 }]\n"))
	files, _ := filepath.Glob("../../configs/*.toml")
	for _, file := range files {
		if src, err := os.ReadFile(file); err == nil {
			f.Add(src)
		}
	}
	lim := Limits{MaxJobs: 200, MaxBytes: 1 << 30}
	f.Fuzz(func(t *testing.T, src []byte) {
		s, err := LoadSource("fuzz.toml", src, lim)
		if err != nil {
			var se *Error
			msg := err.Error()
			if !errors.As(err, &se) || strings.ContainsAny(msg, "\n\r") || !strings.HasPrefix(msg, "spec fuzz.toml") {
				t.Fatalf("error %q: want a one-line *Error", msg)
			}
			return
		}
		n := s.Count()
		if n > lim.MaxJobs || n < len(s.Studies) {
			t.Fatalf("accepted %d runs in %d studies (limit %d)", n, len(s.Studies), lim.MaxJobs)
		}
		jobs, err := s.Expand()
		if err != nil || len(jobs) == 0 || len(jobs) > n {
			t.Fatalf("Expand: %d jobs of %d runs, %v", len(jobs), n, err)
		}
		seen := map[string]bool{}
		for _, j := range jobs {
			v, err := fv2d.Resolve(j.Case, j.Params)
			if err != nil || job.NewID(v.String()) != j.ID || seen[j.ID] {
				t.Fatalf("job %s: resolve %v, id %s, seen %v", j.ID, err, job.NewID(v.String()), seen[j.ID])
			}
			seen[j.ID] = true
		}
		if !sort.SliceIsSorted(jobs, func(a, b int) bool {
			return jobs[a].Cost > jobs[b].Cost || (jobs[a].Cost == jobs[b].Cost && jobs[a].ID < jobs[b].ID)
		}) {
			t.Fatal("jobs not sorted by cost, then ID")
		}
	})
}
