package store

import (
	"bufio"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"testing"

	"fvsweep/sweep/job"
)

// benchJobs makes n distinct jobs of sweep name with the parameter set of an
// Euler case (the common scheme parameters plus three of the case's own), so
// that records have the size real ones have.
func benchJobs(name string, n int) []job.Job {
	limiters := []string{"minmod", "vanleer", "mc", "superbee"}
	fluxes := []string{"exact", "hll", "hllc", "rusanov", "roe"}
	jobs := make([]job.Job, n)
	for i := range jobs {
		n := 16 << (i % 5)
		nx := strconv.Itoa(n)
		p := map[string]string{
			"nx": nx, "ny": nx, "scheme": "muscl", "limiter": limiters[i/5%4], "split": "strang",
			"alternate": "false", "cfl": strconv.FormatFloat(0.1+float64(i/20%9)/10, 'g', -1, 64),
			"t_end": "2", "threads": "1", "max_steps": "1000000", "quad": "3",
			"flux": fluxes[i/180%5], "recon": "primitive", "gamma": "1.4",
			"mach": strconv.Itoa(i / 900), "x0": "0.5", "y0": "0.5",
		}
		delete(p, "nx")
		group := testID("vortex", p)
		p["nx"] = nx
		jobs[i] = job.Job{
			ID: testID("vortex", p), Sweep: name, Study: i / 900, Case: "vortex",
			Params: p, Refine: "nx", Group: group, Cost: float64(n) * float64(n) * float64(n),
		}
	}
	return jobs
}

// benchOutcome is a done outcome of j the size of an Euler result: norms and
// totals of four variables and two functionals.
func benchOutcome(j job.Job) job.Outcome {
	o := job.Outcome{
		JobID: j.ID, Sweep: j.Sweep, Status: job.StatusDone, Worker: "node-07/12",
		Attempts: 1, WallS: 0.0123, Steps: 412, TFinal: 2, CellUpdatesPerS: 4.1e7,
		Errors:      map[string]job.Norms{},
		Totals:      map[string]job.Total{},
		Functionals: map[string]float64{"peak_p": 1.7, "impulse": 0.031},
	}
	for k, v := range []string{"rho", "mx", "my", "E"} {
		e := 1e-3 / float64(k+1)
		o.Errors[v] = job.Norms{L1: e, L2: 1.3 * e, Linf: 4 * e}
		o.Totals[v] = job.Total{Initial: float64(k), Final: float64(k) + 1e-15}
	}
	return o
}

// BenchmarkPutOutcomesBatch stores batches of new outcomes, one transaction
// (one commit with fsync) per batch, and reports outcomes per second; the
// "dup" cases store batches that are all duplicates of done results.
func BenchmarkPutOutcomesBatch(b *testing.B) {
	for _, size := range []int{1, 100, 1000} {
		for _, dup := range []bool{false, true} {
			name := fmt.Sprintf("new-%d", size)
			if dup {
				if size == 1 {
					continue
				}
				name = fmt.Sprintf("dup-%d", size)
			}
			b.Run(name, func(b *testing.B) {
				db := openTemp(b)
				jobs := benchJobs("bench", size*64)
				outs := make([]job.Outcome, len(jobs))
				for i, j := range jobs {
					outs[i] = benchOutcome(j)
				}
				if dup {
					if _, err := db.PutOutcomes(outs[:size]); err != nil {
						b.Fatal(err)
					}
				}
				b.ReportAllocs()
				b.ResetTimer()
				for i := 0; b.Loop(); i++ {
					k := i % 64
					if dup {
						k = 0
					}
					batch := outs[k*size : (k+1)*size]
					if !dup && i >= 64 {
						// Keep the batches new: rename them.
						for n := range batch {
							batch[n].JobID = fmt.Sprintf("%s-%d", jobs[k*size+n].ID, i)
						}
					}
					if _, err := db.PutOutcomes(batch); err != nil {
						b.Fatal(err)
					}
				}
				b.ReportMetric(float64(b.N*size)/b.Elapsed().Seconds(), "outcomes/s")
			})
		}
	}
}

// BenchmarkPutSweep100k stores a sweep of 100,000 jobs into an empty store
// and reports allocations, the resident set before the call (the jobs
// themselves, the test binary) and how far the call raised it at its peak.
func BenchmarkPutSweep100k(b *testing.B) {
	jobs := benchJobs("big", 100_000)
	b.ReportAllocs()
	var base, rise float64
	for b.Loop() {
		b.StopTimer()
		db, err := Open(filepath.Join(b.TempDir(), "big.db"), Options{})
		if err != nil {
			b.Fatal(err)
		}
		runtime.GC()
		base = resetPeakRSS()
		b.StartTimer()
		added, _, err := db.PutSweep(SweepRecord{Name: "big"}, jobs)
		if err != nil || added != len(jobs) {
			b.Fatalf("added %d: %v", added, err)
		}
		b.StopTimer()
		rise = max(rise, procStatusMB("VmHWM:")-base)
		db.Close()
		b.StartTimer()
	}
	b.ReportMetric(base, "base-RSS-MB")
	b.ReportMetric(rise, "rise-RSS-MB")
}

// BenchmarkJobs100k reads the 100,000 jobs of a sweep back and reports the
// heap they hold once read.
func BenchmarkJobs100k(b *testing.B) {
	db := openTemp(b)
	if _, _, err := db.PutSweep(SweepRecord{Name: "big"}, benchJobs("big", 100_000)); err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	var held uint64
	for b.Loop() {
		runtime.GC()
		var before, after runtime.MemStats
		runtime.ReadMemStats(&before)
		jobs, err := db.Jobs("big")
		if err != nil || len(jobs) != 100_000 {
			b.Fatalf("%d jobs: %v", len(jobs), err)
		}
		runtime.GC()
		runtime.ReadMemStats(&after)
		held = after.HeapAlloc - before.HeapAlloc
		runtime.KeepAlive(jobs)
	}
	b.ReportMetric(float64(held)/(1<<20), "held-MB")
}

// procStatusMB is a kB field of /proc/self/status (VmRSS:, VmHWM:) in MiB;
// 0 where there is no such file.
func procStatusMB(field string) float64 {
	f, err := os.Open("/proc/self/status")
	if err != nil {
		return 0
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		if v, ok := strings.CutPrefix(sc.Text(), field); ok {
			kb, _ := strconv.ParseFloat(strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(v), "kB")), 64)
			return kb / 1024
		}
	}
	return 0
}

// resetPeakRSS resets the process's VmHWM to its current resident set
// (Linux: "5" to /proc/self/clear_refs) and returns that, in MiB.
func resetPeakRSS() float64 {
	os.WriteFile("/proc/self/clear_refs", []byte("5"), 0)
	return procStatusMB("VmRSS:")
}
