package spec

import (
	"bytes"
	"encoding/json"
	"errors"
	"strings"
	"testing"

	"fvsweep/fv2d"
	"fvsweep/sweep/job"
)

func TestExtendParse(t *testing.T) {
	src := study("case = \"spec-test-case\"\naxes = { limiter = [\"mc\", \"minmod\"] }\nrefine = { nx = [16, 32, 64], extend_to = 300 }\n")
	pl := mustLoad(t, src, DefaultLimits())
	st := &pl.Studies[0]
	if st.ExtendTo != 300 || st.Refine != "nx" {
		t.Fatalf("study %+v", st)
	}
	// Ratio 2 kept (verify.NextGrid): 128, 256; 512 is beyond 300.
	if g := st.ExtensionGrids(); len(g) != 2 || g[0] != 128 || g[1] != 256 {
		t.Errorf("extension grids %v, want [128 256]", g)
	}
	// Two groups (limiters), two grids each at most; the cost is the sum of
	// fv2d.Estimate of each added run (ny follows nx).
	var want float64
	for _, lim := range []string{"mc", "minmod"} {
		for _, n := range []string{"128", "256"} {
			v, err := fv2d.Resolve("spec-test-case", map[string]string{"limiter": lim, "nx": n, "ny": n})
			if err != nil {
				t.Fatal(err)
			}
			want += fv2d.Estimate(v).Work()
		}
	}
	x := pl.Extension
	if x.Jobs != 4 || x.Cost != want || pl.Summary[0].Extension.Jobs != 4 || pl.Summary[0].Extension.Cost != want {
		t.Errorf("extension %+v (study %+v), want 4 jobs costing %g", x, pl.Summary[0].Extension, want)
	}
	set := pl.Settings()[0]
	if set.ExtendTo != 300 || len(set.Grids) != 3 || set.Grids[2] != 64 {
		t.Errorf("settings %+v", set)
	}
	// The plan says it, in text and JSON; a plan without the key says nothing.
	var b bytes.Buffer
	if err := WritePlan(&b, pl); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(b.String(), "nx 128 256 while the order has not settled: at most 4 more jobs") ||
		!strings.Contains(b.String(), "grids added until the order settles may cost at most 4 more jobs") {
		t.Errorf("plan text:\n%s", b.String())
	}
	b.Reset()
	if err := WritePlanJSON(&b, pl); err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Extension struct{ Jobs int } `json:"extension"`
		Studies   []struct {
			ExtendTo  int `json:"extend_to"`
			Extension struct {
				Grids []int
				Jobs  int
			} `json:"extension"`
		} `json:"studies"`
	}
	if err := json.Unmarshal(b.Bytes(), &doc); err != nil || doc.Extension.Jobs != 4 || doc.Studies[0].ExtendTo != 300 ||
		len(doc.Studies[0].Extension.Grids) != 2 {
		t.Errorf("plan JSON %s (%v)", b.String(), err)
	}
	plain := mustLoad(t, study("case = \"spec-test-case\"\nrefine = { nx = [16, 32] }\n"), DefaultLimits())
	b.Reset()
	WritePlan(&b, plain)
	if strings.Contains(b.String(), "extend") || strings.Contains(b.String(), "settles") || plain.Extension.Jobs != 0 {
		t.Errorf("plan without extend_to:\n%s", b.String())
	}
	b.Reset()
	WritePlanJSON(&b, plain)
	if strings.Contains(b.String(), "extend") {
		t.Errorf("plan JSON without extend_to:\n%s", b.String())
	}
}

func TestExtendErrors(t *testing.T) {
	for _, c := range []struct {
		refine, key, msg string
	}{
		{`{ nx = [16, 32], extend_to = 63 }`, "refine.extend_to", "no room for the next grid nx = 64"},
		{`{ nx = [16, 32], extend_to = 32 }`, "refine.extend_to", "no room"},
		{`{ nx = [16, 32], extend_to = "64" }`, "refine.extend_to", "want an integer grid size"},
		{`{ nx = [16, 32], extend_to = 64.5 }`, "refine.extend_to", "want an integer grid size"},
		{`{ extend_to = 64 }`, "refine", "give the grid sequence beside extend_to"},
		{`{ nx = [1000, 1001], extend_to = 100000 }`, "refine.extend_to", "would add more than 16 grids at the ratio of the last pair (1001 after 1000)"},
		{`{ nx = [16, 32], extend = 64 }`, "refine.extend", "the refinement axis is nx or ny"},
	} {
		_, err := LoadSource("x.toml", []byte(study("case = \"spec-test-case\"\nrefine = "+c.refine+"\n")), DefaultLimits())
		var se *Error
		if !errors.As(err, &se) || se.Key != c.key || se.Line != 5 || !strings.Contains(se.Msg, c.msg) {
			t.Errorf("refine = %s: err %v, want %s: ...%s...", c.refine, err, c.key, c.msg)
		}
	}
}

func TestExtendLimits(t *testing.T) {
	// Memory: the grids that may be added must fit the per-job limit like
	// the spec's own. A limit that the 64^2 run fits and 128^2 does not.
	v, err := fv2d.Resolve("spec-test-case", map[string]string{"nx": "64", "ny": "64"})
	if err != nil {
		t.Fatal(err)
	}
	lim := Limits{MaxBytes: fv2d.Estimate(v).Bytes}
	src := study("case = \"spec-test-case\"\nrefine = { nx = [16, 32, 64] }\n")
	mustLoad(t, src, lim)
	src = study("case = \"spec-test-case\"\nrefine = { nx = [16, 32, 64], extend_to = 128 }\n")
	_, err = LoadSource("x.toml", []byte(src), lim)
	var se *Error
	if !errors.As(err, &se) || se.Key != "refine.extend_to" || se.Line != 5 || !strings.Contains(se.Msg, "grid 128x128 that may be added") {
		t.Errorf("memory: err %v", err)
	}
	// Jobs: 3 runs and 2 that may be added are 5.
	src = study("case = \"spec-test-case\"\nrefine = { nx = [16, 32, 64], extend_to = 256 }\n")
	mustLoad(t, src, Limits{MaxJobs: 5})
	_, err = LoadSource("x.toml", []byte(src), Limits{MaxJobs: 4})
	if err == nil || !strings.Contains(err.Error(), "the spec expands to 3 jobs and extend_to may add 2 more, over the job limit of 4") {
		t.Errorf("jobs: err %v", err)
	}
}

func TestExtraJob(t *testing.T) {
	// The added job is the run the spec would give for that grid: its ID,
	// parameters and cost are those of a spec that lists the grid.
	src := func(nx string) string {
		return study("case = \"spec-test-case\"\nfixed = { amp = 0.3 }\nsnapshot = true\nrefine = { nx = " + nx + " }\n")
	}
	check := func(name, grids, ny string) {
		t.Helper()
		jobs, err := mustLoad(t, src(grids), DefaultLimits()).Expand()
		if err != nil {
			t.Fatal(err)
		}
		byN := map[string]job.Job{}
		for _, j := range jobs {
			byN[j.Params["nx"]] = j
		}
		got, c, err := ExtraJob(byN["16"], byN["32"], 64)
		if err != nil {
			t.Fatal(err)
		}
		want := byN["64"]
		if got.ID != want.ID || got.Group != want.Group || got.Cost != want.Cost || c.Work() != want.Cost || !got.Snapshot ||
			got.Study != 1 || got.Refine != "nx" || got.Params["ny"] != ny {
			t.Errorf("%s: ExtraJob = %+v, want %+v", name, got, want)
		}
	}
	check("ny follows nx", "[16, 32, 64]", "64")
	// ny listed with nx at half of it: scaled by the same factor.
	src = func(nx string) string {
		return study("case = \"spec-test-case\"\nfixed = { amp = 0.3 }\nsnapshot = true\nrefine = { nx = " + nx + ", ny = [8, 16, 32] }\n")
	}
	check("ny with nx", "[16, 32, 64]", "32")
	// ny fixed: kept.
	src = func(nx string) string {
		return study("case = \"spec-test-case\"\nfixed = { amp = 0.3, ny = 4 }\nsnapshot = true\nrefine = { nx = " + nx + " }\n")
	}
	check("ny fixed", "[16, 32, 64]", "4")

	if _, _, err := ExtraJob(job.Job{}, job.Job{Refine: "nx", Params: map[string]string{"nx": "32"}}, 32); err == nil {
		t.Error("a grid not finer than the last: no error")
	}
}
