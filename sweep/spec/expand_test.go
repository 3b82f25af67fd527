package spec

import (
	"fmt"
	"math"
	"testing"

	"fvsweep/fv2d"
	"fvsweep/sweep/job"
)

func TestExpandCounts(t *testing.T) {
	// Study 1: 3 limiters x 2 schemes (crossed) x 2 (flux, amp) pairs x 3 grids = 36.
	s := mustLoad(t, goodSpec, DefaultLimits())
	jobs, err := s.Expand()
	if err != nil {
		t.Fatal(err)
	}
	if len(jobs) != 38 || s.Count() != 38 || s.Studies[0].Count() != 36 || s.Studies[1].Count() != 2 {
		t.Fatalf("jobs = %d, Count = %d, %d, %d; want 38, 38, 36, 2", len(jobs), s.Count(), s.Studies[0].Count(), s.Studies[1].Count())
	}
	groups := map[string][]job.Job{}
	pairs := map[string]bool{}
	for _, j := range jobs {
		if j.Study != 1 {
			if j.Params["ny"] != "4" || j.Params["test"] != "2" || j.Snapshot || j.Refine != "nx" {
				t.Errorf("study 2 job %v", j)
			}
			continue
		}
		if j.Sweep != "good-one" || j.Case != "spec-test-case" || j.Refine != "nx" || !j.Snapshot {
			t.Errorf("job header %+v", j)
		}
		if j.Params["nx"] != j.Params["ny"] {
			t.Errorf("ny should follow nx: %v", j.Params)
		}
		if j.Params["t_end"] != "0.5" || j.Params["cfl"] != "0.8" {
			t.Errorf("fixed values lost: %v", j.Params)
		}
		pairs[j.Params["flux"]+"/"+j.Params["amp"]] = true
		groups[j.Group] = append(groups[j.Group], j)
	}
	if len(pairs) != 2 || !pairs["hll/0.2"] || !pairs["hllc/0.3"] {
		t.Errorf("together pairs = %v, want hll/0.2 and hllc/0.3 only", pairs)
	}
	if len(groups) != 12 {
		t.Errorf("%d groups, want 12 (3 limiters x 2 schemes x 2 pairs)", len(groups))
	}
	for g, js := range groups {
		grids := map[string]bool{}
		for _, j := range js {
			grids[j.Params["nx"]] = true
			v, err := fv2d.Resolve(j.Case, j.Params)
			if err != nil {
				t.Fatal(err)
			}
			// Every parameter but the grid is in the group identity.
			v2, _ := fv2d.Resolve(j.Case, map[string]string{"nx": "999", "ny": "999", "limiter": j.Params["limiter"],
				"scheme": j.Params["scheme"], "flux": j.Params["flux"], "amp": j.Params["amp"], "t_end": "0.5", "cfl": "0.8"})
			if groupOf(&s.Studies[0], v) != g || groupOf(&s.Studies[0], v2) != g {
				t.Errorf("group %q: job %v has group %q", g, j.Params, groupOf(&s.Studies[0], v))
			}
		}
		if len(js) != 3 || len(grids) != 3 {
			t.Errorf("group %q has %d jobs on %d grids, want 3 on 3", g, len(js), len(grids))
		}
	}
}

func TestExpandIDsAndOrder(t *testing.T) {
	s := mustLoad(t, goodSpec, DefaultLimits())
	jobs, _ := s.Expand()
	ids := map[string]bool{}
	for i, j := range jobs {
		if ids[j.ID] {
			t.Errorf("duplicate ID %s", j.ID)
		}
		ids[j.ID] = true
		// The ID is JobID of the job's own parameters: a worker can check it.
		v, err := fv2d.Resolve(j.Case, j.Params)
		if err != nil || job.NewID(v.String()) != j.ID {
			t.Errorf("job %s: JobID(Resolve(params)) = %s, %v", j.ID, job.NewID(v.String()), err)
		}
		if w := fv2d.Estimate(v).Work(); w != j.Cost {
			t.Errorf("job %s: cost %v, want Estimate %v", j.ID, j.Cost, w)
		}
		if i > 0 {
			p := jobs[i-1]
			if p.Cost < j.Cost || (p.Cost == j.Cost && p.ID >= j.ID) {
				t.Errorf("jobs %d, %d out of order: (%v, %s) before (%v, %s)", i-1, i, p.Cost, p.ID, j.Cost, j.ID)
			}
		}
	}
	if jobs[0].Params["nx"] != "64" {
		t.Errorf("first job is on nx=%s, want the largest grid first", jobs[0].Params["nx"])
	}
	// The same spec again gives the same jobs in the same order.
	again, _ := mustLoad(t, goodSpec, DefaultLimits()).Expand()
	for i := range jobs {
		if again[i].ID != jobs[i].ID || again[i].Group != jobs[i].Group {
			t.Fatalf("second expansion differs at %d: %s vs %s", i, again[i].ID, jobs[i].ID)
		}
	}
}

func TestCanonicalIDs(t *testing.T) {
	// "0.50", "0.5" and "5e-1" name one run; so do 0.5 written in TOML three ways.
	ids := map[string]bool{}
	for _, cfl := range []string{"0.50", "0.5", "5e-1", " 0.5"} {
		v, err := fv2d.Resolve("spec-test-case", map[string]string{"cfl": cfl})
		if err != nil {
			t.Fatal(err)
		}
		ids[job.NewID(v.String())] = true
	}
	for _, cfl := range []string{"0.50", "0.5", "5e-1", "0.500_0"} {
		s := mustLoad(t, study("case = \"spec-test-case\"\nfixed = { cfl = "+cfl+" }\n"), DefaultLimits())
		jobs, err := s.Expand()
		if err != nil || len(jobs) != 1 {
			t.Fatalf("cfl %s: %d jobs, %v", cfl, len(jobs), err)
		}
		ids[jobs[0].ID] = true
	}
	if len(ids) != 1 {
		t.Errorf("%d distinct IDs, want 1: %v", len(ids), ids)
	}
}

// dupSpec: study 2 repeats study 1's mc runs and adds minmod: 2 + 2 runs,
// 3 jobs.
const dupSpec = `name = "dup"
[[study]]
case = "spec-test-case"
axes = { limiter = ["mc"] }
refine = { nx = [8, 16] }

[[study]]
case = "spec-test-case"
snapshot = true
axes = { limiter = ["minmod", "mc"] }
fixed = { nx = 16, ny = 16 }
`

func TestExpandDedup(t *testing.T) {
	s := mustLoad(t, dupSpec, DefaultLimits())
	jobs, err := s.Expand()
	if err != nil {
		t.Fatal(err)
	}
	if s.Count() != 4 || len(jobs) != 3 {
		t.Fatalf("Count %d, jobs %d; want 4 runs, 3 jobs", s.Count(), len(jobs))
	}
	for _, j := range jobs {
		key := j.Params["limiter"] + j.Params["nx"]
		switch key {
		case "mc16": // shared: first study's identity, snapshot from the second
			if j.Study != 1 || j.Refine != "nx" || !j.Snapshot {
				t.Errorf("shared job %+v: want study 1, refine nx, snapshot", j)
			}
		case "mc8":
			if j.Study != 1 || j.Snapshot {
				t.Errorf("job %+v", j)
			}
		case "minmod16":
			if j.Study != 2 || j.Refine != "" || !j.Snapshot {
				t.Errorf("job %+v", j)
			}
		default:
			t.Errorf("unexpected job %v", j.Params)
		}
	}
	if pl := s; pl.Runs != 4 || pl.Jobs != 3 || pl.Summary[0].Runs != 2 || pl.Summary[1].Runs != 2 {
		t.Errorf("plan runs %d jobs %d", pl.Runs, pl.Jobs)
	}
}

func TestPlan(t *testing.T) {
	pl := mustLoad(t, goodSpec, DefaultLimits())
	jobs, _ := pl.Expand()
	total, share := 0.0, 0.0
	for _, j := range jobs {
		total += j.Cost
	}
	for _, sp := range pl.Summary {
		share += sp.Share
	}
	if pl.Jobs != len(jobs) || pl.Runs != 38 || math.Abs(pl.Cost-total) > 1e-9*total || math.Abs(share-1) > 1e-12 {
		t.Errorf("plan jobs %d runs %d cost %v share %v; want %d, 38, %v, 1", pl.Jobs, pl.Runs, pl.Cost, share, len(jobs), total)
	}
	if got := fmt.Sprint(pl.Summary[0].Grids); got != "[16x16 32x32 64x64]" {
		t.Errorf("grids of study 1 = %s", got)
	}
	if got := fmt.Sprint(pl.Summary[1].Grids); got != "[8x4 16x4]" {
		t.Errorf("grids of study 2 = %s", got)
	}
}

func TestEachOrder(t *testing.T) {
	// The grid varies fastest, then together groups, then axes in file order.
	s := mustLoad(t, study("case = \"spec-test-case\"\naxes = { limiter = [\"mc\", \"minmod\"] }\n"+
		"together = [{ k0 = [1, 2] }]\nrefine = { nx = [8, 16] }\n"), DefaultLimits())
	var got []string
	err := s.Studies[0].each(func(kv map[string]string) error {
		got = append(got, kv["limiter"]+","+kv["k0"]+","+kv["nx"]+","+kv["ny"])
		return nil
	})
	want := []string{"mc,1,8,8", "mc,1,16,16", "mc,2,8,8", "mc,2,16,16",
		"minmod,1,8,8", "minmod,1,16,16", "minmod,2,8,8", "minmod,2,16,16"}
	if err != nil || fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("each = %v, %v\nwant %v", got, err, want)
	}
	// A study with nothing varied has one run.
	one := mustLoad(t, study("case = \"spec-test-case\"\n"), DefaultLimits())
	if n := one.Count(); n != 1 {
		t.Errorf("Count = %d, want 1", n)
	}
	if jobs, err := one.Expand(); err != nil || len(jobs) != 1 || jobs[0].Refine != "" {
		t.Errorf("Expand = %v, %v", jobs, err)
	}
}

// bench100k is a study of 10 x 10 x 10 x 10 x 10 = 100,000 runs, parsed
// and checked.
func bench100k(b *testing.B) *Plan {
	list := "[0, 1, 2, 3, 4, 5, 6, 7, 8, 9]"
	s, err := LoadSource("bench.toml", []byte(study("case = \"spec-test-case\"\naxes = { k0 = "+list+", k1 = "+list+
		", k2 = "+list+", k3 = "+list+" }\nrefine = { nx = [4, 5, 6, 7, 8, 9, 10, 11, 12, 13] }\n")), DefaultLimits())
	if err != nil {
		b.Fatal(err)
	}
	return s
}

func BenchmarkExpand(b *testing.B) {
	s := bench100k(b)
	for b.Loop() {
		jobs, err := s.Expand()
		if err != nil || len(jobs) != 100_000 {
			b.Fatal(len(jobs), err)
		}
	}
	b.ReportMetric(100_000, "jobs/op")
}

// BenchmarkEach streams the 100,000 jobs without keeping them.
func BenchmarkEach(b *testing.B) {
	s := bench100k(b)
	for b.Loop() {
		n := 0
		err := s.Each(func(job.Job) error { n++; return nil })
		if err != nil || n != 100_000 {
			b.Fatal(n, err)
		}
	}
	b.ReportMetric(100_000, "jobs/op")
}

// BenchmarkParse100k parses and checks a 100,000-run spec: Check resolves
// each run, estimates its cost and sorts the distinct runs.
func BenchmarkParse100k(b *testing.B) {
	for b.Loop() {
		bench100k(b)
	}
	b.ReportMetric(100_000, "runs/op")
}

// BenchmarkParseVortex parses and checks a spec of 2,400 vortex runs, whose
// cost estimates sample the real case.
func BenchmarkParseVortex(b *testing.B) {
	src := []byte(`name = "bench"
[[study]]
case = "vortex"
axes = { limiter = ["minmod", "vanleer", "mc", "superbee"], flux = ["hllc", "hll", "rusanov"], cfl = [0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.85, 0.9, 0.95, 0.99], split = ["strang", "lie"], scheme = ["muscl", "godunov"] }
refine = { nx = [16, 32, 64, 128, 256] }
`)
	for b.Loop() {
		s, err := LoadSource("bench.toml", src, DefaultLimits())
		if err != nil {
			b.Fatal(err)
		}
		if n := s.Count(); n != 2400 {
			b.Fatal(n)
		}
	}
}
