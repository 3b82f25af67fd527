package store

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"maps"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
	"time"

	bolt "go.etcd.io/bbolt"

	"fvsweep/sweep/job"
)

// testJob is a job of sweep name with the given parameters; its ID is the
// hash of their canonical string, like job.NewID.
func testJob(name string, nx int, limiter string) job.Job {
	params := map[string]string{"nx": fmt.Sprint(nx), "ny": fmt.Sprint(nx), "limiter": limiter, "cfl": "0.8"}
	return job.Job{
		ID:     testID("vortex", params),
		Sweep:  name,
		Case:   "vortex",
		Params: params,
		Refine: "nx",
		Group:  "limiter=" + limiter,
		Cost:   float64(nx * nx * nx),
	}
}

func testID(kase string, params map[string]string) string {
	keys := slices.Sorted(maps.Keys(params))
	s := kase
	for _, k := range keys {
		s += " " + k + "=" + params[k]
	}
	sum := sha256.Sum256([]byte(s))
	return hex.EncodeToString(sum[:16])
}

func testJobs(name string) []job.Job {
	var jobs []job.Job
	for _, lim := range []string{"minmod", "vanleer", "mc"} {
		for _, nx := range []int{16, 32, 64} {
			jobs = append(jobs, testJob(name, nx, lim))
		}
	}
	return jobs
}

func testOutcome(j job.Job, status job.Status) job.Outcome {
	o := job.Outcome{
		JobID: j.ID, Sweep: j.Sweep, Status: status, Worker: "host-1/3",
		Attempts: 1, WallS: 0.25, Steps: 120, TFinal: 2,
		CellUpdatesPerS: 3.5e7,
	}
	if status == job.StatusDone {
		o.Errors = map[string]job.Norms{"rho": {L1: 1e-3, L2: 2e-3, Linf: 5e-3}}
		o.Totals = map[string]job.Total{"rho": {Initial: 4, Final: 4}}
		o.Functionals = map[string]float64{"peak_p": 1.5}
	} else {
		o.Error = "diverged at t=0.1 (step 3): negative pressure"
	}
	return o
}

func openTemp(t testing.TB) *DB {
	t.Helper()
	db, err := Open(filepath.Join(t.TempDir(), "data", "fvsweep.db"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { db.Close() })
	return db
}

func TestSweepRoundTrip(t *testing.T) {
	db := openTemp(t)
	jobs := testJobs("lim")
	created := time.Date(2026, 3, 4, 5, 6, 7, 0, time.UTC)
	rec := SweepRecord{Name: "lim", SpecFile: "configs/lim.toml", Spec: "name = \"lim\"\n", Created: created}
	added, stored, err := db.PutSweep(rec, jobs)
	if err != nil {
		t.Fatal(err)
	}
	if added != len(jobs) || stored != 0 {
		t.Fatalf("first PutSweep: added %d stored %d, want %d 0", added, stored, len(jobs))
	}
	got, err := db.Sweep("lim")
	if err != nil {
		t.Fatal(err)
	}
	if got.Name != "lim" || got.Spec != rec.Spec || got.SpecFile != rec.SpecFile || !got.Created.Equal(created) || got.Jobs != len(jobs) || got.Updated.IsZero() {
		t.Fatalf("Sweep = %+v", got)
	}
	for _, j := range jobs {
		g, err := db.Job("lim", j.ID)
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(g, j) {
			t.Fatalf("Job %s = %+v, want %+v", j.ID, g, j)
		}
	}
	list, err := db.Jobs("lim")
	if err != nil {
		t.Fatal(err)
	}
	if len(list) != len(jobs) {
		t.Fatalf("Jobs: %d, want %d", len(list), len(jobs))
	}
	for i := 1; i < len(list); i++ {
		a, b := list[i-1], list[i]
		if a.Cost < b.Cost || (a.Cost == b.Cost && a.ID >= b.ID) {
			t.Fatalf("Jobs not in cost-desc, ID order at %d: %v/%s then %v/%s", i, a.Cost, a.ID, b.Cost, b.ID)
		}
	}

	// Same jobs again, with an edited spec: nothing added, text updated.
	rec.Spec = "name = \"lim\" # edited\n"
	rec.Created = time.Time{}
	added, stored, err = db.PutSweep(rec, jobs)
	if err != nil {
		t.Fatal(err)
	}
	if added != 0 || stored != 0 {
		t.Fatalf("second PutSweep: added %d stored %d, want 0 0", added, stored)
	}
	got, _ = db.Sweep("lim")
	if got.Spec != rec.Spec || !got.Created.Equal(created) || got.Jobs != len(jobs) {
		t.Fatalf("after resubmission Sweep = %+v", got)
	}

	// Two jobs done, one failed; one more job added.
	if _, err := db.PutOutcomes([]job.Outcome{testOutcome(jobs[0], job.StatusDone), testOutcome(jobs[1], job.StatusDone), testOutcome(jobs[2], job.StatusFailed)}); err != nil {
		t.Fatal(err)
	}
	more := append(append([]job.Job(nil), jobs...), testJob("lim", 128, "mc"), jobs[0])
	added, stored, err = db.PutSweep(rec, more)
	if err != nil {
		t.Fatal(err)
	}
	if added != 1 || stored != 3 {
		t.Fatalf("third PutSweep: added %d stored %d, want 1 3", added, stored)
	}
	if got, _ = db.Sweep("lim"); got.Jobs != len(jobs)+1 {
		t.Fatalf("Jobs count %d, want %d", got.Jobs, len(jobs)+1)
	}
}

func TestSweepsAndCancel(t *testing.T) {
	db := openTemp(t)
	for _, name := range []string{"b", "a"} {
		if _, _, err := db.PutSweep(SweepRecord{Name: name}, testJobs(name)[:2]); err != nil {
			t.Fatal(err)
		}
	}
	if err := db.SetCanceled("a", true); err != nil {
		t.Fatal(err)
	}
	list, err := db.Sweeps()
	if err != nil {
		t.Fatal(err)
	}
	if len(list) != 2 || list[0].Name != "a" || list[1].Name != "b" || !list[0].Canceled || list[1].Canceled {
		t.Fatalf("Sweeps = %+v", list)
	}
	// A resubmission keeps the canceled mark; SetCanceled clears it.
	if _, _, err := db.PutSweep(SweepRecord{Name: "a", Canceled: false}, nil); err != nil {
		t.Fatal(err)
	}
	if r, _ := db.Sweep("a"); !r.Canceled {
		t.Fatal("PutSweep cleared Canceled")
	}
	if err := db.SetCanceled("a", false); err != nil {
		t.Fatal(err)
	}
	if r, _ := db.Sweep("a"); r.Canceled {
		t.Fatal("SetCanceled(false) did not clear it")
	}
	if err := db.SetCanceled("nope", true); !errors.Is(err, ErrNotFound) {
		t.Fatalf("SetCanceled(unknown) = %v, want ErrNotFound", err)
	}
}

func TestNotFound(t *testing.T) {
	db := openTemp(t)
	if _, err := db.Sweep("x"); !errors.Is(err, ErrNotFound) {
		t.Errorf("Sweep: %v", err)
	}
	if _, err := db.Jobs("x"); !errors.Is(err, ErrNotFound) {
		t.Errorf("Jobs: %v", err)
	}
	if _, err := db.Outcomes("x"); !errors.Is(err, ErrNotFound) {
		t.Errorf("Outcomes: %v", err)
	}
	if _, err := db.Query("x", nil); !errors.Is(err, ErrNotFound) {
		t.Errorf("Query: %v", err)
	}
	if _, _, err := db.PutSweep(SweepRecord{Name: "x"}, nil); err != nil {
		t.Fatal(err)
	}
	if _, err := db.Job("x", "0123"); !errors.Is(err, ErrNotFound) {
		t.Errorf("Job: %v", err)
	}
	if _, ok, err := db.Outcome("0123"); ok || err != nil {
		t.Errorf("Outcome: %v %v", ok, err)
	}
}

func TestHasJobs(t *testing.T) {
	db := openTemp(t)
	jobs := testJobs("lim")
	if _, _, err := db.PutSweep(SweepRecord{Name: "lim"}, jobs); err != nil {
		t.Fatal(err)
	}
	outs := []job.Outcome{
		{Sweep: "lim", JobID: jobs[0].ID},
		{Sweep: "lim", JobID: "0123"},       // unknown job
		{Sweep: "other", JobID: jobs[1].ID}, // unknown sweep
		{Sweep: "lim", JobID: jobs[len(jobs)-1].ID},
	}
	known, err := db.HasJobs(outs)
	if want := []bool{true, false, false, true}; err != nil || !reflect.DeepEqual(known, want) {
		t.Fatalf("HasJobs = %v, %v; want %v", known, err, want)
	}
}

func TestOutcomePrecedence(t *testing.T) {
	db := openTemp(t)
	j := testJobs("p")[0]
	done, failed := testOutcome(j, job.StatusDone), testOutcome(j, job.StatusFailed)
	done2 := done
	done2.Worker = "other"
	failed2 := failed
	failed2.Attempts = 3

	steps := []struct {
		name    string
		put     job.Outcome
		written int
		want    job.Outcome
	}{
		{"first failed", failed, 1, failed},
		{"same failed again", failed, 0, failed},
		{"later failed replaces failed", failed2, 1, failed2},
		{"done replaces failed", done, 1, done},
		{"duplicate done is a no-op", done2, 0, done},
		{"failed never replaces done", failed, 0, done},
	}
	for _, s := range steps {
		n, err := db.PutOutcomes([]job.Outcome{s.put})
		if err != nil {
			t.Fatalf("%s: %v", s.name, err)
		}
		got, ok, err := db.Outcome(j.ID)
		if err != nil || !ok {
			t.Fatalf("%s: Outcome %v %v", s.name, ok, err)
		}
		if n != s.written || !reflect.DeepEqual(got, s.want) {
			t.Fatalf("%s: written %d (want %d), stored %+v, want %+v", s.name, n, s.written, got, s.want)
		}
	}
	// A batch that changes nothing commits nothing.
	before := txID(t, db)
	if n, err := db.PutOutcomes([]job.Outcome{done, done2, failed}); n != 0 || err != nil {
		t.Fatalf("all-duplicate batch: %d %v", n, err)
	}
	if after := txID(t, db); after != before {
		t.Fatalf("all-duplicate batch committed: txid %d -> %d", before, after)
	}
	// Within one batch the later record sees the earlier one.
	k := testJobs("p")[1]
	n, err := db.PutOutcomes([]job.Outcome{testOutcome(k, job.StatusFailed), testOutcome(k, job.StatusDone), testOutcome(k, job.StatusDone)})
	if err != nil || n != 2 {
		t.Fatalf("in-batch precedence: written %d, %v; want 2", n, err)
	}
	if got, _, _ := db.Outcome(k.ID); got.Status != job.StatusDone {
		t.Fatalf("in-batch: status %q", got.Status)
	}
}

func TestOutcomesOfSweepAndSharedResults(t *testing.T) {
	db := openTemp(t)
	a, b := testJobs("a"), testJobs("b")
	if _, _, err := db.PutSweep(SweepRecord{Name: "a"}, a); err != nil {
		t.Fatal(err)
	}
	// Sweep b shares jobs[0..2] with a (same IDs), plus one of its own.
	shared := append([]job.Job(nil), b[:3]...)
	own := testJob("b", 256, "minmod")
	if _, _, err := db.PutSweep(SweepRecord{Name: "b"}, append(shared, own)); err != nil {
		t.Fatal(err)
	}
	outs := []job.Outcome{testOutcome(a[0], job.StatusDone), testOutcome(a[5], job.StatusFailed), testOutcome(own, job.StatusDone)}
	if n, err := db.PutOutcomes(outs); err != nil || n != 3 {
		t.Fatalf("PutOutcomes: %d %v", n, err)
	}
	oa, err := db.Outcomes("a")
	if err != nil {
		t.Fatal(err)
	}
	if len(oa) != 2 || oa[a[0].ID].Status != job.StatusDone || oa[a[5].ID].Status != job.StatusFailed {
		t.Fatalf("Outcomes(a) = %v", oa)
	}
	ob, err := db.Outcomes("b")
	if err != nil {
		t.Fatal(err)
	}
	if len(ob) != 2 || ob[a[0].ID].Status != job.StatusDone || ob[own.ID].Status != job.StatusDone {
		t.Fatalf("Outcomes(b) = %v", ob)
	}
	st, err := db.Stored([]string{a[0].ID, a[1].ID, a[5].ID, "missing"})
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(st, map[string]bool{a[0].ID: true, a[5].ID: true}) {
		t.Fatalf("Stored = %v", st)
	}
	tally, err := db.Count("a")
	if err != nil || tally != (Tally{Jobs: 9, Done: 1, Failed: 1}) {
		t.Fatalf("Count(a) = %+v %v", tally, err)
	}
	// Retry failed: delete, and the job counts as not stored again.
	if err := db.DeleteOutcomes([]string{a[5].ID, "missing"}); err != nil {
		t.Fatal(err)
	}
	if _, ok, _ := db.Outcome(a[5].ID); ok {
		t.Fatal("DeleteOutcomes left the outcome")
	}
	if _, stored, err := db.PutSweep(SweepRecord{Name: "a"}, a); err != nil || stored != 1 {
		t.Fatalf("PutSweep after delete: stored %d %v, want 1", stored, err)
	}
}

func TestQuery(t *testing.T) {
	db := openTemp(t)
	jobs := testJobs("q")
	if _, _, err := db.PutSweep(SweepRecord{Name: "q"}, jobs); err != nil {
		t.Fatal(err)
	}
	var mc64 job.Job
	for _, j := range jobs {
		if j.Params["limiter"] == "mc" && j.Params["nx"] == "64" {
			mc64 = j
		}
	}
	if _, err := db.PutOutcomes([]job.Outcome{testOutcome(mc64, job.StatusDone)}); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		filter map[string]string
		want   int
	}{
		{nil, 9},
		{map[string]string{}, 9},
		{map[string]string{"limiter": "mc"}, 3},
		{map[string]string{"limiter": "mc", "nx": "64"}, 1},
		{map[string]string{"limiter": "mc", "nx": "65"}, 0},
		{map[string]string{"flux": "hllc"}, 0},
		{map[string]string{"case": "vortex", "study": "0"}, 9},
		{map[string]string{"case": "sod"}, 0},
	}
	for _, c := range cases {
		rows, err := db.Query("q", c.filter)
		if err != nil {
			t.Fatal(err)
		}
		if len(rows) != c.want {
			t.Errorf("Query(%v): %d rows, want %d", c.filter, len(rows), c.want)
		}
		for _, r := range rows {
			for k, v := range c.filter {
				if k != "case" && k != "study" && r.Job.Params[k] != v {
					t.Errorf("Query(%v) returned %v", c.filter, r.Job.Params)
				}
			}
			if (r.Outcome != nil) != (r.Job.ID == mc64.ID) {
				t.Errorf("Query(%v): job %s outcome %v", c.filter, r.Job.ID, r.Outcome)
			}
		}
	}
	rows, _ := db.Query("q", map[string]string{"limiter": "mc"})
	if rows[0].Job.ID != mc64.ID || rows[0].Outcome == nil || rows[0].Outcome.Errors["rho"].L1 != 1e-3 {
		t.Fatalf("first mc row = %+v (want nx=64 first, with its outcome)", rows[0])
	}
}

func TestInvalidBatchWritesNothing(t *testing.T) {
	db := openTemp(t)
	jobs := testJobs("bad")
	if _, _, err := db.PutSweep(SweepRecord{Name: "bad"}, jobs[:3]); err != nil {
		t.Fatal(err)
	}
	if _, err := db.PutOutcomes([]job.Outcome{testOutcome(jobs[0], job.StatusFailed)}); err != nil {
		t.Fatal(err)
	}
	nan := testOutcome(jobs[3], job.StatusDone)
	nan.Errors["rho"] = job.Norms{L1: math.NaN()}
	badOutcomes := []struct {
		name string
		o    job.Outcome
		msg  string
	}{
		{"empty job id", job.Outcome{Status: job.StatusDone}, "empty job_id"},
		{"unknown status", job.Outcome{JobID: jobs[3].ID, Status: "running"}, `status "running"`},
		{"NaN norm", nan, "errors.rho.l1"},
	}
	for _, c := range badOutcomes {
		// Valid records first, so the failure happens mid-transaction.
		batch := []job.Outcome{testOutcome(jobs[0], job.StatusDone), testOutcome(jobs[1], job.StatusDone), c.o, testOutcome(jobs[2], job.StatusDone)}
		n, err := db.PutOutcomes(batch)
		if err == nil || n != 0 || !strings.Contains(err.Error(), c.msg) || !strings.Contains(err.Error(), "outcome 2") {
			t.Fatalf("%s: PutOutcomes = %d, %v; want an error naming outcome 2 and %q", c.name, n, err, c.msg)
		}
		if o, _, _ := db.Outcome(jobs[0].ID); o.Status != job.StatusFailed {
			t.Fatalf("%s: stored failed outcome changed to %q", c.name, o.Status)
		}
		if st, _ := db.Stored([]string{jobs[1].ID, jobs[2].ID}); len(st) != 0 {
			t.Fatalf("%s: part of a failed batch was written: %v", c.name, st)
		}
	}

	before, _ := db.Sweep("bad")
	badJobs := []struct {
		name string
		j    job.Job
		msg  string
	}{
		{"empty id", job.Job{Case: "vortex"}, "empty job_id"},
		{"other sweep", testJob("other", 8, "mc"), `belongs to sweep "other"`},
		{"no case", job.Job{ID: "ab", Sweep: "bad"}, "empty case"},
		{"negative cost", job.Job{ID: "ab", Sweep: "bad", Case: "vortex", Cost: -1}, "negative cost"},
	}
	for _, c := range badJobs {
		rec := SweepRecord{Name: "bad", Spec: "changed"}
		_, _, err := db.PutSweep(rec, append(append([]job.Job(nil), jobs[3:]...), c.j))
		if err == nil || !strings.Contains(err.Error(), c.msg) {
			t.Fatalf("%s: PutSweep error %v, want %q", c.name, err, c.msg)
		}
		after, _ := db.Sweep("bad")
		list, _ := db.Jobs("bad")
		if !reflect.DeepEqual(before, after) || len(list) != 3 {
			t.Fatalf("%s: failed PutSweep changed the store: %+v, %d jobs", c.name, after, len(list))
		}
	}
	if _, _, err := db.PutSweep(SweepRecord{Name: "new"}, []job.Job{{Case: "vortex"}}); err == nil {
		t.Fatal("PutSweep of a new sweep with a bad job succeeded")
	}
	if _, err := db.Sweep("new"); !errors.Is(err, ErrNotFound) {
		t.Fatalf("failed PutSweep created the sweep: %v", err)
	}
	if _, _, err := db.PutSweep(SweepRecord{}, nil); err == nil {
		t.Fatal("PutSweep with an empty name succeeded")
	}
	if err := db.Verify(); err != nil {
		t.Fatal(err)
	}
}

func TestInUse(t *testing.T) {
	path := filepath.Join(t.TempDir(), "fvsweep.db")
	first, err := Open(path, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer first.Close()
	for _, ro := range []bool{false, true} {
		start := time.Now()
		second, err := Open(path, Options{ReadOnly: ro, Timeout: 200 * time.Millisecond})
		took := time.Since(start)
		if err == nil {
			second.Close()
			t.Fatalf("ReadOnly=%v: second Open succeeded while the first holds the file", ro)
		}
		if !errors.Is(err, ErrInUse) || !strings.Contains(err.Error(), path) {
			t.Fatalf("ReadOnly=%v: error %v, want ErrInUse naming %s", ro, err, path)
		}
		if took > 2*time.Second {
			t.Fatalf("ReadOnly=%v: gave up after %v, want about the 200ms timeout", ro, took)
		}
	}
	if err := first.Close(); err != nil {
		t.Fatal(err)
	}
	// Released: two read-only opens share the lock.
	r1, err := Open(path, Options{ReadOnly: true})
	if err != nil {
		t.Fatal(err)
	}
	defer r1.Close()
	r2, err := Open(path, Options{ReadOnly: true})
	if err != nil {
		t.Fatal(err)
	}
	defer r2.Close()
	if _, err := r2.PutOutcomes([]job.Outcome{{JobID: "x", Status: job.StatusDone}}); err == nil {
		t.Fatal("write through a read-only store succeeded")
	}
}

func TestOpenErrors(t *testing.T) {
	dir := t.TempDir()
	if _, err := Open(filepath.Join(dir, "missing.db"), Options{ReadOnly: true}); err == nil || !errors.Is(err, os.ErrNotExist) {
		t.Errorf("read-only Open of a missing file: %v", err)
	}
	if _, err := Open("", Options{}); err == nil {
		t.Error("Open(\"\") succeeded")
	}
	junk := filepath.Join(dir, "junk.db")
	if err := os.WriteFile(junk, []byte(strings.Repeat("not a database ", 1000)), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := Open(junk, Options{}); err == nil || !strings.Contains(err.Error(), junk) {
		t.Errorf("Open of a junk file: %v", err)
	}

	// A bbolt file of someone else's.
	foreign := filepath.Join(dir, "foreign.db")
	writeRaw(t, foreign, func(tx *bolt.Tx) error {
		_, err := tx.CreateBucket([]byte("other"))
		return err
	})
	if _, err := Open(foreign, Options{}); err == nil || !strings.Contains(err.Error(), "not an fvsweep store") {
		t.Errorf("Open of a foreign bbolt file: %v", err)
	}

	// A store from a newer fvsweep.
	newer := filepath.Join(dir, "newer.db")
	db, err := Open(newer, Options{})
	if err != nil {
		t.Fatal(err)
	}
	db.Close()
	writeRaw(t, newer, func(tx *bolt.Tx) error {
		return tx.Bucket(bucketMeta).Put(keySchema, []byte("7"))
	})
	for _, ro := range []bool{false, true} {
		_, err := Open(newer, Options{ReadOnly: ro})
		if err == nil || !strings.Contains(err.Error(), "schema version 7 is newer") {
			t.Errorf("ReadOnly=%v Open of a schema-7 store: %v", ro, err)
		}
	}
	// Reopening a good store keeps its data.
	path := filepath.Join(dir, "again.db")
	db, err = Open(path, Options{})
	if err != nil {
		t.Fatal(err)
	}
	db.PutSweep(SweepRecord{Name: "s"}, testJobs("s"))
	db.Close()
	db, err = Open(path, Options{ReadOnly: true})
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	if r, err := db.Sweep("s"); err != nil || r.Jobs != 9 || db.Path() != path {
		t.Fatalf("reopened: %+v %v", r, err)
	}
}

// writeRaw applies fn to the bbolt file at path directly.
func writeRaw(t *testing.T, path string, fn func(*bolt.Tx) error) {
	t.Helper()
	b, err := bolt.Open(path, 0o644, &bolt.Options{Timeout: time.Second})
	if err != nil {
		t.Fatal(err)
	}
	defer b.Close()
	if err := b.Update(fn); err != nil {
		t.Fatal(err)
	}
}

func TestVerifyFindsBadRecords(t *testing.T) {
	path := filepath.Join(t.TempDir(), "v.db")
	db, err := Open(path, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if err := db.Verify(); err != nil {
		t.Fatal(err)
	}
	db.Close()
	writeRaw(t, path, func(tx *bolt.Tx) error {
		return tx.Bucket(bucketResults).Put([]byte("abc"), []byte(`{"job_id":"abc","status":"do`))
	})
	db, err = Open(path, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	if err := db.Verify(); err == nil {
		t.Fatal("Verify passed a truncated result record")
	}
	if _, _, err := db.Outcome("abc"); err == nil {
		t.Fatal("Outcome decoded a truncated record")
	}
	if err := db.DeleteOutcomes([]string{"abc"}); err != nil {
		t.Fatal(err)
	}
	if _, _, err := db.PutSweep(SweepRecord{Name: "s"}, testJobs("s")); err != nil {
		t.Fatal(err)
	}
	if err := db.Verify(); err != nil {
		t.Fatal(err)
	}
	db.Close()
	writeRaw(t, path, func(tx *bolt.Tx) error {
		return tx.Bucket(bucketJobs).Bucket([]byte("s")).Delete([]byte(testJobs("s")[0].ID))
	})
	db, err = Open(path, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	if err := db.Verify(); err == nil || !strings.Contains(err.Error(), "record counts 9 jobs, bucket holds 8") {
		t.Fatalf("Verify of a sweep missing a job: %v", err)
	}
}

// txID is the ID of the last committed transaction.
func txID(t *testing.T, db *DB) int {
	t.Helper()
	var id int
	if err := db.bolt.View(func(tx *bolt.Tx) error { id = tx.ID(); return nil }); err != nil {
		t.Fatal(err)
	}
	return id
}

// TestPutSweepStaged runs the large-sweep path of PutSweep with a small
// chunk: new sweep, growth of an existing one, staging cleaned up.
func TestPutSweepStaged(t *testing.T) {
	defer func(n int) { putChunk = n }(putChunk)
	putChunk = 7
	path := filepath.Join(t.TempDir(), "staged.db")
	db, err := Open(path, Options{})
	if err != nil {
		t.Fatal(err)
	}
	all := benchJobs("big", 90)
	first := all[:50]
	added, stored, err := db.PutSweep(SweepRecord{Name: "big", Spec: "v1"}, first)
	if err != nil || added != 50 || stored != 0 {
		t.Fatalf("new sweep: added %d stored %d %v", added, stored, err)
	}
	if _, err := db.PutOutcomes([]job.Outcome{testOutcome(first[3], job.StatusDone)}); err != nil {
		t.Fatal(err)
	}
	// Grow it: 40 new jobs among 20 old ones (one with an edited cost, which
	// must not replace the stored job), given in reverse order with repeats.
	edited := first[10]
	edited.Cost = 1
	var more []job.Job
	more = append(more, all[50:]...)
	more = append(more, first[:20]...)
	more = append(more, edited, all[60], first[3])
	slices.Reverse(more)
	added, stored, err = db.PutSweep(SweepRecord{Name: "big", Spec: "v2"}, more)
	if err != nil || added != 40 || stored != 1 {
		t.Fatalf("grown sweep: added %d stored %d %v", added, stored, err)
	}
	rec, _ := db.Sweep("big")
	jobs, err := db.Jobs("big")
	if err != nil {
		t.Fatal(err)
	}
	if rec.Jobs != 90 || len(jobs) != 90 || rec.Spec != "v2" {
		t.Fatalf("record %+v, %d jobs; want 90", rec, len(jobs))
	}
	if j, _ := db.Job("big", edited.ID); j.Cost != first[10].Cost {
		t.Fatalf("a resubmitted job replaced the stored one: cost %v", j.Cost)
	}
	for _, j := range all {
		if g, err := db.Job("big", j.ID); err != nil || !reflect.DeepEqual(g, j) {
			t.Fatalf("job %s: %+v %v", j.ID, g, err)
		}
	}
	// An invalid job anywhere: nothing changes.
	bad := append(slices.Clone(benchJobs("big", 120)), job.Job{ID: "x"})
	if _, _, err := db.PutSweep(SweepRecord{Name: "big", Spec: "v3"}, bad); err == nil || !strings.Contains(err.Error(), "job 120") {
		t.Fatalf("bad large PutSweep: %v", err)
	}
	if rec, _ := db.Sweep("big"); rec.Jobs != 90 || rec.Spec != "v2" {
		t.Fatalf("bad large PutSweep changed the record: %+v", rec)
	}
	if err := db.Verify(); err != nil {
		t.Fatal(err)
	}
	db.Close()

	// A PutSweep killed half-way leaves a staging bucket: Open drops it.
	writeRaw(t, path, func(tx *bolt.Tx) error {
		b, err := tx.Bucket(bucketStaging).CreateBucket([]byte("big"))
		if err != nil {
			return err
		}
		return b.Put([]byte("k"), []byte("half"))
	})
	db, err = Open(path, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	db.bolt.View(func(tx *bolt.Tx) error {
		if tx.Bucket(bucketStaging).Bucket([]byte("big")) != nil {
			t.Error("Open left a staging bucket")
		}
		return nil
	})
	if jobs, _ := db.Jobs("big"); len(jobs) != 90 {
		t.Fatalf("%d jobs after reopen", len(jobs))
	}
}
