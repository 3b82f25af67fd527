package store

import (
	"errors"
	"testing"

	"fvsweep/sweep/job"
)

func TestAddJobs(t *testing.T) {
	db := openTemp(t)
	if _, err := db.AddJobs("s", testJobs("s")[:1]); !errors.Is(err, ErrNotFound) {
		t.Fatalf("unknown sweep: err %v", err)
	}
	rec := SweepRecord{Name: "s", SpecFile: "s.toml", Spec: "first"}
	if _, _, err := db.PutSweep(rec, testJobs("s")); err != nil {
		t.Fatal(err)
	}
	// A submission of an edited spec after the record was read: AddJobs
	// must keep what it wrote.
	rec.Spec = "edited"
	if _, _, err := db.PutSweep(rec, nil); err != nil {
		t.Fatal(err)
	}
	extra := []job.Job{testJob("s", 128, "mc"), testJob("", 128, "minmod"), testJob("s", 64, "mc")} // the last is stored already
	added, err := db.AddJobs("s", extra)
	if err != nil || added != 2 {
		t.Fatalf("AddJobs: %d, %v; want 2 added", added, err)
	}
	got, err := db.Sweep("s")
	if err != nil || got.Jobs != 11 || got.Spec != "edited" || got.SpecFile != "s.toml" {
		t.Fatalf("record %+v, %v; want 11 jobs and the edited spec", got, err)
	}
	j, err := db.Job("s", extra[1].ID)
	if err != nil || j.Sweep != "s" || j.Params["nx"] != "128" {
		t.Errorf("added job %+v, %v", j, err)
	}
	if added, err := db.AddJobs("s", extra); err != nil || added != 0 {
		t.Errorf("again: %d, %v; want 0", added, err)
	}
	if _, err := db.AddJobs("s", []job.Job{testJob("other", 128, "mc")}); err == nil {
		t.Error("a job of another sweep: no error")
	}
	if err := db.Verify(); err != nil {
		t.Error(err)
	}
}
