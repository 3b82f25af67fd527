package coordinator_test

import (
	"bytes"
	"strings"
	"testing"
	"time"

	"fvsweep/sweep/job"
	"fvsweep/sweep/table"
	"fvsweep/worker"
)

// settleSpec has two studies that add grids until the order settles, run
// by the real solver on small grids (about 2 s on two cores):
//
//  1. first-order Godunov on the isentropic vortex approaches its order 1
//     from below (design order 1 on smooth solutions, common practice,
//     docs/references.md §6 and §16): the pairs up to 32 give 0.61 then
//     0.79, apart by more than 0.15; 64 gives 0.90, within 0.15 of 0.79 and
//     of the design order: settled at 64, and 128 is never run.
//  2. MUSCL on Toro's test 3 (Toro 2009, ch. 4), density in L1: its
//     strong contact (contacts converge below the design order, §6) and
//     the thin shell behind it keep the orders moving (-0.08, 0.66, 0.61,
//     0.87 from 100 to 800, measured here, §16), so the grids are added up
//     to extend_to and the group is not settled by 800.
const settleSpec = `name = "settle"
[[study]]
label = "vortex-godunov"
case = "vortex"
fixed = { t_end = 0.5, scheme = "godunov" }
refine = { nx = [8, 16, 32], extend_to = 128 }

[[study]]
label = "tube-contact"
case = "shocktube"
fixed = { ny = 2, test = 3, scheme = "muscl" }
refine = { nx = [25, 50, 100], extend_to = 800 }
var = "rho"
`

func TestGridsAddedUntilSettled(t *testing.T) {
	r := newRig(t, testDelivery)
	r.addWorker(2, worker.FV2D{}.Run)
	pl := r.spec(settleSpec)
	if pl.Extension.Jobs != 2+3 { // vortex 64, 128; tube 200, 400, 800
		t.Fatalf("plan: extension %+v, want 5 jobs at most", pl.Extension)
	}
	rep := r.submit(settleSpec)
	if rep.Jobs != 6 || rep.Queued != 6 {
		t.Fatalf("submit %+v, want the spec's 6 jobs queued", rep)
	}
	r.wait("settle", 10, 60*time.Second)
	time.Sleep(300 * time.Millisecond) // room for a wrong eleventh job
	tally, err := r.db.Count("settle")
	if err != nil {
		t.Fatal(err)
	}
	if tally.Jobs != 10 || tally.Done != 10 {
		t.Fatalf("tally %+v, want 10 jobs done: 1 grid added to the vortex, 3 to the tube", tally)
	}
	jobs, err := r.db.Jobs("settle")
	if err != nil {
		t.Fatal(err)
	}
	grids := map[int][]string{}
	for _, j := range jobs {
		grids[j.Study] = append(grids[j.Study], j.Params["nx"]+"x"+j.Params["ny"])
		// Every added job went through the queue with a ticket.
		if q, ok, err := r.db.Queue("settle", j.ID); err != nil || !ok || len(q.Tickets) == 0 {
			t.Errorf("job %s %s: queue record %+v, %v, %v", j.ID, j.Params["nx"], q, ok, err)
		}
	}
	for study, want := range map[int][]string{1: {"8x8", "16x16", "32x32", "64x64"}, 2: {"25x2", "50x2", "100x2", "200x2", "400x2", "800x2"}} {
		for _, g := range want {
			if !strings.Contains(strings.Join(grids[study], " "), g) || len(grids[study]) != len(want) {
				t.Errorf("study %d grids %v, want %v", study, grids[study], want)
				break
			}
		}
	}

	rec, err := r.db.Sweep("settle")
	if err != nil {
		t.Fatal(err)
	}
	outs, err := r.db.Outcomes("settle")
	if err != nil {
		t.Fatal(err)
	}
	studies, fails, err := table.Build(rec.Studies, jobs, outs, table.Options{})
	if err != nil || len(fails) != 0 {
		t.Fatal(err, fails)
	}
	var b bytes.Buffer
	if err := table.Write(&b, "text", table.Set{Sweep: "settle", Studies: studies}); err != nil {
		t.Fatal(err)
	}
	text := b.String()
	for _, want := range []string{
		"; settled at nx = 64\n",
		"added nx = 64: order 0.79 after 0.61: they differ by 0.18, more than 0.15",
		"; not settled by nx = 800 (",
		"added nx = 200: ", "added nx = 400: ", "added nx = 800: ",
	} {
		if !strings.Contains(text, want) {
			t.Errorf("table lacks %q:\n%s", want, text)
		}
	}
	if s := studies[0].Groups[0].Settle; s == nil || s.State != "settled" || s.At != 64 {
		t.Errorf("vortex settling %+v", s)
	}
	if s := studies[1].Groups[0].Settle; s == nil || s.State != "not-settled" || s.At != 800 {
		t.Errorf("tube settling %+v", s)
	}
	for _, o := range outs {
		if o.Status != job.StatusDone || o.Attempts != 1 {
			t.Errorf("outcome %+v", o)
		}
	}
}
