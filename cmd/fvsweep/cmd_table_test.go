package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"slices"
	"strconv"
	"strings"
	"testing"

	"fvsweep/sweep/job"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/table"
	"fvsweep/sweep/wire"
)

// tableSpec has a case without an exact solution judged by its entropy on
// the grids of the worked example of Celik et al., J. Fluids Eng. 130(7)
// 078001, 2008 (docs/references.md §5: 18000, 8000 and 4500 cells in 2-D as
// 180 x 100, 100 x 80 and 90 x 50 on the unit square), and a vortex study
// judged by its errors.
const tableSpec = `name = "tbl"
[[study]]
label = "celik"
case = "quadrants"
fixed = { config = 3 }
refine = { nx = [90, 100, 180], ny = [50, 80, 100] }
functional = "entropy"

[[study]]
case = "vortex"
fixed = { t_end = 0.5 }
refine = { nx = [16, 32, 64] }
design_order = 2
`

// tableData is the sweep of tableSpec with every job done: the entropy of
// the Celik et al. 2008 example (phi 6.063, 5.972, 5.863 from fine to
// coarse), and vortex errors falling like h^1.5.
func tableData(t *testing.T) *sweepData {
	t.Helper()
	spec, err := parseStoredSpec("tbl.toml", tableSpec)
	if err != nil {
		t.Fatal(err)
	}
	jobs, err := spec.Expand()
	if err != nil {
		t.Fatal(err)
	}
	phi := map[int]float64{18000: 6.063, 8000: 5.972, 4500: 5.863}
	d := &sweepData{name: "tbl", specFile: "tbl.toml", spec: tableSpec, studies: spec.Settings()}
	for _, j := range jobs {
		nx, _ := strconv.Atoi(j.Params["nx"])
		ny, _ := strconv.Atoi(j.Params["ny"])
		o := &job.Outcome{JobID: j.ID, Sweep: "tbl", Status: job.StatusDone, Attempts: 1, WallS: 0.5}
		if j.Case == "quadrants" {
			o.Functionals = map[string]float64{"entropy": phi[nx*ny], "rho_max": 2}
		} else {
			e := math.Pow(10/float64(nx), 1.5)
			o.Errors = map[string]job.Norms{"rho": {L1: e, L2: 2 * e, Linf: 3 * e}}
			o.Functionals = map[string]float64{"entropy": -1}
		}
		d.rows = append(d.rows, wire.Row{Job: j, Status: job.StatusDone, Outcome: o})
	}
	return d
}

func renderTables(t *testing.T, d *sweepData, format string, o table.Options) string {
	t.Helper()
	var b bytes.Buffer
	if err := printTables(&b, d, o, format); err != nil {
		t.Fatalf("%s: %v", format, err)
	}
	return b.String()
}

// The JSON of table carries, per group, the GCI records of fvsweep gci
// --json for the same values and cell counts, key for key.
func TestTableJSONGCIMatchesGCICommand(t *testing.T) {
	var set struct {
		Studies []struct {
			Exact       bool
			Functionals []string
			Groups      []struct {
				Rows []struct {
					Functionals map[string]*float64
				}
				GCI []struct {
					Functional string
					NX         []int
					Records    []map[string]any
				}
			}
		}
	}
	if err := json.Unmarshal([]byte(renderTables(t, tableData(t), "json", table.Options{})), &set); err != nil {
		t.Fatal(err)
	}
	var cmd strings.Builder
	if code := runGCI([]string{"--values", "6.063,5.972,5.863", "--cells", "18000,8000,4500", "--dim", "2", "--json"}, &cmd, &cmd); code != 0 {
		t.Fatalf("gci: exit %d: %s", code, cmd.String())
	}
	var want map[string]any
	if err := json.Unmarshal([]byte(cmd.String()), &want); err != nil {
		t.Fatal(err)
	}
	st := set.Studies[0]
	if st.Exact || !slices.Equal(st.Functionals, []string{"entropy"}) || len(st.Groups) != 1 || len(st.Groups[0].GCI) != 1 {
		t.Fatalf("study 1: %+v", st)
	}
	if v := st.Groups[0].Rows[2].Functionals["entropy"]; v == nil || *v != 6.063 {
		t.Errorf("finest row entropy %v", v)
	}
	g := st.Groups[0].GCI[0]
	if g.Functional != "entropy" || !slices.Equal(g.NX, []int{180, 100, 90}) || len(g.Records) != 1 {
		t.Fatalf("gci %+v", g)
	}
	got := g.Records[0]
	if got["convergence"] != "monotone" || want["convergence"] != "monotone" {
		t.Errorf("convergence %v, gci command %v", got["convergence"], want["convergence"])
	}
	for _, k := range []string{"order", "extrapolated", "e_approx", "e_extrap", "gci_fine", "asymptotic_ratio", "r21", "r32"} {
		a, okA := got[k].(float64)
		b, okB := want[k].(float64)
		if !okA || !okB || math.Abs(a-b) > 1e-12*math.Abs(b) {
			t.Errorf("%s: table %v, gci command %v", k, got[k], want[k])
		}
	}
	// gci_fine is a fraction: 2.2 % in Celik et al. 2008.
	if f, _ := got["gci_fine"].(float64); math.Abs(f-0.022) > 5e-4 {
		t.Errorf("gci_fine %v, want about 0.022", got["gci_fine"])
	}
	// The vortex has an exact solution and no functional named: no GCI.
	if v := set.Studies[1]; !v.Exact || v.Functionals != nil || v.Groups[0].GCI != nil {
		t.Errorf("vortex study: %+v", v)
	}
}

// Text and markdown: the functional column and the GCI line in percent,
// no error columns where there is no exact solution, and the verdict
// status said once.
func TestTableTextAndMarkdownGCI(t *testing.T) {
	d := tableData(t)
	text := renderTables(t, d, "text", table.Options{})
	quad, vortex, _ := strings.Cut(text, "study 2 ")
	for _, want := range []string{"study 1 celik (quadrants): no exact solution; GCI of entropy", "entropy", "6.063",
		"GCI (Celik et al. 2008", "entropy on the finest grid (nx 180): 6.063 ± 0.132 (GCI_fine 2.17 %)", "180/100/90", "monotone", "1.53", "6.168496" /* Celik et al.: 6.1685 */, "1.5 %", "1.71 %", "2.17 %"} {
		if !strings.Contains(quad, want) {
			t.Errorf("text of study 1 lacks %q:\n%s", want, quad)
		}
	}
	for _, bad := range []string{"L1", "Linf", "verdict", "rho_max"} {
		if strings.Contains(quad, bad) {
			t.Errorf("text of study 1 shows %q:\n%s", bad, quad)
		}
	}
	if !strings.Contains(vortex, "verdict: order-low (finest-pair order 1.5") || strings.Contains(vortex, "order-low: ") || strings.Contains(vortex, "GCI") {
		t.Errorf("text of study 2:\n%s", vortex)
	}
	md := renderTables(t, d, "markdown", table.Options{})
	for _, want := range []string{"| nx | ny | h | entropy | wall_s | status |", "| entropy | 180/100/90 | 1.5 | 1.333 | monotone | 1.53 |",
		"verdict: **order-low** (finest-pair"} {
		if !strings.Contains(md, want) {
			t.Errorf("markdown lacks %q:\n%s", want, md)
		}
	}
	// --functional picks another one where the results report it.
	text = renderTables(t, d, "text", table.Options{Functional: "rho_max"})
	if quad, _, _ := strings.Cut(text, "study 2 "); !strings.Contains(quad, "GCI of rho_max") || strings.Contains(quad, "GCI of entropy") {
		t.Errorf("--functional rho_max:\n%s", quad)
	}
	if err := printTables(&bytes.Buffer{}, d, table.Options{Functional: "lift"}, "text"); err == nil || !strings.Contains(err.Error(), `"lift"`) {
		t.Errorf("--functional lift: %v", err)
	}
}

// CSV: one line per grid and one per GCI record, every line as wide as the
// header, the GCI quantities as fractions.
func TestTableCSVGCI(t *testing.T) {
	recs, err := csv.NewReader(strings.NewReader(renderTables(t, tableData(t), "csv", table.Options{}))).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	head := recs[0]
	col := func(name string) int { return slices.Index(head, name) }
	if col("record") != 0 || col("phi:entropy") < 0 || col("gci_fine") < 0 {
		t.Fatalf("header %v", head)
	}
	kinds := map[string]int{}
	for _, r := range recs[1:] {
		kinds[r[0]]++
		if r[0] == "gci" {
			if r[col("functional")] != "entropy" || r[col("grids_nx")] != "180/100/90" || r[col("convergence")] != "monotone" {
				t.Errorf("gci line %v", r)
			}
			if f, _ := strconv.ParseFloat(r[col("gci_fine")], 64); math.Abs(f-0.022) > 5e-4 {
				t.Errorf("gci_fine %q, want a fraction near 0.022", r[col("gci_fine")])
			}
		}
		if r[0] == "grid" && r[col("case")] == "quadrants" && r[col("nx")] == "180" && r[col("phi:entropy")] != "6.063" {
			t.Errorf("finest quadrants grid: phi %q", r[col("phi:entropy")])
		}
	}
	if kinds["grid"] != 6 || kinds["gci"] != 1 || len(kinds) != 2 {
		t.Errorf("lines by record: %v", kinds)
	}
}

// parseStoredSpec parses a test's spec with no limit (the tests' sweeps
// are stored as they are; openSweep reads their settings back with
// spec.StoredSettings).
func parseStoredSpec(file, src string) (*spec.Plan, error) {
	return spec.LoadSource(file, []byte(src), spec.Limits{MaxJobs: math.MaxInt, MaxBytes: math.MaxInt64})
}
