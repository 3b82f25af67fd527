package store

import (
	"bufio"
	"fmt"
	"fvsweep/sweep/job"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"testing"
	"time"

	bolt "go.etcd.io/bbolt"
)

// crashEnv names the database the child process of TestKillWhileWriting
// writes to; the child is this test binary re-run with it set.
const crashEnv = "FVSWEEP_STORE_CRASH_DB"

const crashBatch = 100

// crashJobs is batch k of the child's writes: crashBatch jobs of sweep
// "crash" with IDs numbered from k*crashBatch.
func crashJobs(k int) []job.Job {
	jobs := make([]job.Job, crashBatch)
	for i := range jobs {
		n := k*crashBatch + i
		jobs[i] = job.Job{
			ID: fmt.Sprintf("%032x", n), Sweep: "crash", Case: "vortex",
			Params: map[string]string{"nx": strconv.Itoa(16 << (n % 4)), "limiter": "minmod"},
			Cost:   float64(n % 97),
		}
	}
	return jobs
}

// TestCrashChild is the child of TestKillWhileWriting; without crashEnv it
// does nothing. It continues from what the store holds and, batch after
// batch, adds crashBatch jobs (every other batch through the staged path of
// PutSweep, in several transactions) and then their outcomes, printing the batch number after both commit, until it is killed.
func TestCrashChild(t *testing.T) {
	path := os.Getenv(crashEnv)
	if path == "" {
		t.Skip("child process of TestKillWhileWriting only")
	}
	db, err := Open(path, Options{Timeout: 5 * time.Second})
	if err != nil {
		t.Fatal(err)
	}
	k := 0
	if c, err := db.Count("crash"); err == nil {
		k = c.Done / crashBatch // a batch killed between its two commits is redone
	}
	for ; ; k++ {
		putChunk = 10_000
		if k%2 == 0 {
			putChunk = 40 // the staged path (100 new jobs > 40) of PutSweep
		}
		jobs := crashJobs(k)
		if _, _, err := db.PutSweep(SweepRecord{Name: "crash", Spec: fmt.Sprint("batch ", k)}, jobs); err != nil {
			t.Fatal(err)
		}
		outs := make([]job.Outcome, len(jobs))
		for i, j := range jobs {
			outs[i] = testOutcome(j, job.StatusDone)
		}
		if _, err := db.PutOutcomes(outs); err != nil {
			t.Fatal(err)
		}
		fmt.Println(k)
	}
}

// TestKillWhileWriting kills a writing child process with SIGKILL at a
// random moment, five times over, and checks after each kill that the store
// opens, passes Verify, holds whole batches only, and holds at least every
// batch the child reported committed.
func TestKillWhileWriting(t *testing.T) {
	if os.Getenv(crashEnv) != "" {
		t.Skip("in the child")
	}
	path := filepath.Join(t.TempDir(), "crash.db")
	rng := rand.New(rand.NewPCG(1, 2))
	prevJobs := 0
	for round := range 5 {
		cmd := exec.Command(os.Args[0], "-test.run=^TestCrashChild$", "-test.count=1")
		cmd.Env = append(os.Environ(), crashEnv+"="+path)
		out, err := cmd.StdoutPipe()
		if err != nil {
			t.Fatal(err)
		}
		cmd.Stderr = os.Stderr
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		lines := bufio.NewScanner(out)
		want := 2 + rng.IntN(8)
		last := -1
		for n := 0; n < want && lines.Scan(); n++ {
			if last, err = strconv.Atoi(lines.Text()); err != nil {
				cmd.Process.Kill()
				t.Fatalf("round %d: child said %q", round, lines.Text())
			}
		}
		// Kill somewhere inside the next batches.
		time.Sleep(time.Duration(rng.IntN(3000)) * time.Microsecond)
		cmd.Process.Kill()
		cmd.Wait()
		if last < 0 {
			t.Fatalf("round %d: child reported no batch", round)
		}

		staged := stagingLeft(t, path)
		db, err := Open(path, Options{})
		if err != nil {
			t.Fatalf("round %d: reopen after kill: %v", round, err)
		}
		if err := db.Verify(); err != nil {
			t.Fatalf("round %d: %v", round, err)
		}
		rec, err := db.Sweep("crash")
		if err != nil {
			t.Fatal(err)
		}
		jobs, err := db.Jobs("crash")
		if err != nil {
			t.Fatal(err)
		}
		tally, err := db.Count("crash")
		if err != nil {
			t.Fatal(err)
		}
		db.Close()
		committed := (last + 1) * crashBatch
		t.Logf("round %d: child reported batch %d; store holds %d jobs, %d results; killed while staging: %v", round, last, len(jobs), tally.Done, staged)
		switch {
		case rec.Jobs != len(jobs) || tally.Jobs != len(jobs):
			t.Fatalf("round %d: sweep record counts %d jobs, bucket holds %d", round, rec.Jobs, len(jobs))
		case len(jobs)%crashBatch != 0 || tally.Done%crashBatch != 0:
			t.Fatalf("round %d: a partial batch: %d jobs, %d results", round, len(jobs), tally.Done)
		case tally.Done < committed || len(jobs) < prevJobs:
			t.Fatalf("round %d: lost committed writes: %d results, %d committed; %d jobs, %d before", round, tally.Done, committed, len(jobs), prevJobs)
		case tally.Done != len(jobs) && tally.Done != len(jobs)-crashBatch:
			t.Fatalf("round %d: %d results for %d jobs", round, tally.Done, len(jobs))
		case tally.Failed != 0:
			t.Fatalf("round %d: %d failed results", round, tally.Failed)
		}
		prevJobs = len(jobs)
	}
}

// stagingLeft reports whether the store at path holds a staging bucket, the
// trace of a PutSweep killed half-way.
func stagingLeft(t *testing.T, path string) bool {
	b, err := bolt.Open(path, 0, &bolt.Options{ReadOnly: true, Timeout: time.Second})
	if err != nil {
		t.Fatal(err)
	}
	defer b.Close()
	left := false
	b.View(func(tx *bolt.Tx) error {
		return tx.Bucket(bucketStaging).ForEachBucket(func([]byte) error { left = true; return nil })
	})
	return left
}
