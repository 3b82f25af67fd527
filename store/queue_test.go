package store

import (
	"errors"
	"testing"

	"fvsweep/sweep/job"
)

// A job keeps the tickets of its last two publishes; a dropped ticket (the
// publish was refused) no longer matches; Deliveries says which results
// match and what is stored.
func TestTicketsAndDeliveries(t *testing.T) {
	db := openTemp(t)
	jobs := testJobs("a")
	if _, _, err := db.PutSweep(SweepRecord{Name: "a"}, jobs); err != nil {
		t.Fatal(err)
	}
	j := jobs[0]
	for _, tk := range []string{"t1", "t2", "t3"} {
		if err := db.AddTickets([]Ticket{{"a", j.ID, tk}}); err != nil {
			t.Fatal(err)
		}
	}
	if err := db.DropTickets([]Ticket{{"a", j.ID, "t3"}}); err != nil {
		t.Fatal(err)
	}
	r, ok, err := db.Queue("a", j.ID)
	if err != nil || !ok || len(r.Tickets) != 1 || r.Tickets[0] != "t2" {
		t.Fatalf("queue record %+v %v %v, want only t2 (t1 pushed out, t3 dropped)", r, ok, err)
	}
	if _, err := db.PutOutcomes([]job.Outcome{testOutcome(j, job.StatusDone)}); err != nil {
		t.Fatal(err)
	}
	ds, err := db.Deliveries([]Ticket{
		{"a", j.ID, "t2"}, {"a", j.ID, "t1"}, {"a", j.ID, ""}, {"b", j.ID, "t2"}, {"a", jobs[1].ID, "t2"},
	})
	if err != nil {
		t.Fatal(err)
	}
	want := []Delivery{
		{Known: true, TicketOK: true, Stored: job.StatusDone},
		{Known: true, Stored: job.StatusDone},
		{Known: true, Stored: job.StatusDone},
		{},
		{Known: true},
	}
	for i, d := range ds {
		if d.Known != want[i].Known || d.TicketOK != want[i].TicketOK || d.Stored != want[i].Stored {
			t.Errorf("delivery %d: %+v, want %+v", i, d, want[i])
		}
	}
	if ds[0].Job.ID != j.ID {
		t.Errorf("delivery 0 carries job %q", ds[0].Job.ID)
	}
	if err := db.Verify(); err != nil {
		t.Fatal(err)
	}
}

// A done outcome without a snapshot does not complete a job that asks for
// one; a done with a snapshot then replaces it, and one without never
// replaces one with.
func TestSnapshotIsPartOfComplete(t *testing.T) {
	db := openTemp(t)
	plain := testJobs("plain")[:1]
	snap := testJobs("snap")[:1]
	snap[0].Snapshot = true
	for name, js := range map[string][]job.Job{"plain": plain, "snap": snap} {
		if _, _, err := db.PutSweep(SweepRecord{Name: name}, js); err != nil {
			t.Fatal(err)
		}
	}
	o := testOutcome(plain[0], job.StatusDone)
	if _, err := db.PutOutcomes([]job.Outcome{o}); err != nil {
		t.Fatal(err)
	}
	if c, _ := db.Complete(plain); !c[plain[0].ID] {
		t.Fatal("plain job not complete")
	}
	if c, _ := db.Complete(snap); c[snap[0].ID] {
		t.Fatal("a job that asks for a snapshot is complete without one")
	}
	with := o
	with.Snapshot = "fields/" + o.JobID
	if n, err := db.PutOutcomes([]job.Outcome{with}); n != 1 || err != nil {
		t.Fatalf("done with snapshot over done without: %d written, %v", n, err)
	}
	if n, err := db.PutOutcomes([]job.Outcome{o}); n != 0 || err != nil {
		t.Fatalf("done without snapshot over done with: %d written, %v", n, err)
	}
	if c, _ := db.Complete(snap); !c[snap[0].ID] {
		t.Fatal("snapshot job not complete after its snapshot came")
	}
}

// Forget discards what its selection picks, files a record with who and
// what, and leaves the rest.
func TestForget(t *testing.T) {
	db := openTemp(t)
	jobs := testJobs("f")
	for i := range jobs {
		jobs[i].Study = i % 2
	}
	if _, _, err := db.PutSweep(SweepRecord{Name: "f"}, jobs); err != nil {
		t.Fatal(err)
	}
	if _, _, err := db.PutSweep(SweepRecord{Name: "g"}, testJobs("g")[:1]); err != nil {
		t.Fatal(err)
	}
	var outs []job.Outcome
	for i, j := range jobs {
		st := job.StatusDone
		if i < 3 {
			st = job.StatusFailed
		}
		outs = append(outs, testOutcome(j, st))
	}
	if _, err := db.PutOutcomes(outs); err != nil {
		t.Fatal(err)
	}
	count := func() Tally { t.Helper(); c, _ := db.Count("f"); return c }
	rec, err := db.Forget("f", Selection{Failed: true}, "ann@host")
	if err != nil || len(rec.Jobs) != 3 || count().Failed != 0 || count().Done != 6 {
		t.Fatalf("forget failed: %+v %v, tally %+v", rec, err, count())
	}
	if rec.Shared != 1 { // jobs[0] is also in sweep g
		t.Errorf("shared %d, want 1", rec.Shared)
	}
	rec, err = db.Forget("f", Selection{Study: 1, HasStudy: true}, "bob")
	if err != nil || len(rec.Jobs) != 3 { // studies 1 among done jobs 3..8: 3,5,7
		t.Fatalf("forget study 1: %+v %v", rec, err)
	}
	rec, err = db.Forget("f", Selection{JobID: jobs[4].ID}, "cy")
	if err != nil || len(rec.Jobs) != 1 || rec.Jobs[jobs[4].ID] != "done" {
		t.Fatalf("forget job: %+v %v", rec, err)
	}
	if _, err := db.Forget("f", Selection{JobID: "nope"}, "cy"); !errors.Is(err, ErrNotFound) {
		t.Fatalf("forget unknown job: %v", err)
	}
	if rec, err := db.Forget("f", Selection{Failed: true}, "dee"); err != nil || len(rec.Jobs) != 0 {
		t.Fatalf("forget nothing: %+v %v", rec, err)
	}
	recs, err := db.Forgotten("f")
	if err != nil || len(recs) != 3 || recs[0].By != "ann@host" || recs[0].What != "failed" ||
		recs[1].What != "study 1" || recs[2].What != "job "+jobs[4].ID || recs[0].At.IsZero() {
		t.Fatalf("records %+v %v", recs, err)
	}
	if c := count(); c.Done != 2 {
		t.Fatalf("tally %+v, want 2 done left", c)
	}
	if err := db.Verify(); err != nil {
		t.Fatal(err)
	}
}
