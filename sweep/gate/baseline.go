package gate

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"strings"

	"fvsweep/sweep/table"
)

// BaselineFormat is the value of a baseline file's "format" key.
const BaselineFormat = "fvsweep-gate-baseline/1"

// MaxBaselineBytes is the largest baseline file ReadBaseline reads.
const MaxBaselineBytes = 16 << 20

// Baseline is the errors and orders of an accepted run, by study and
// group: a small JSON file meant to be committed next to the spec. Numbers
// are written with the fewest digits that read back as the same float64,
// so that a tolerance of 0 compares bits.
type Baseline struct {
	Format string          `json:"format"`
	Sweep  string          `json:"sweep"`
	Groups []BaselineGroup `json:"groups"`

	// Name is where the baseline was read from, for the reports.
	Name string `json:"-"`
}

// BaselineGroup is one group of a baseline, keyed by Study and Group.
type BaselineGroup struct {
	Study  string         `json:"study"` // the study's label, else its case
	Group  string         `json:"group"` // every parameter but the grid
	Label  string         `json:"label"` // the group's label in the tables
	Var    string         `json:"var"`
	Norm   string         `json:"norm"`
	Grids  []BaselineGrid `json:"grids"` // coarsest first
	Fitted *float64       `json:"fitted_order,omitempty"`
}

// BaselineGrid is one grid of a group: its error in the study's norm and
// the observed order against the next coarser grid (none on the coarsest).
type BaselineGrid struct {
	NX    int      `json:"nx"`
	NY    int      `json:"ny"`
	Error float64  `json:"error"`
	Order *float64 `json:"order,omitempty"`
}

func groupKey(study, group string) string { return study + "\x00" + group }

func (b *Baseline) index() map[string]*BaselineGroup {
	m := make(map[string]*BaselineGroup, len(b.Groups))
	for i := range b.Groups {
		g := &b.Groups[i]
		m[groupKey(g.Study, g.Group)] = g
	}
	return m
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

func ptr(x float64) *float64 {
	if !finite(x) {
		return nil
	}
	return &x
}

// ErrNoGroups is NewBaseline's error for a set without a single error.
var ErrNoGroups = errors.New("baseline: no group of the sweep has an error to keep")

// NewBaseline takes the errors and orders of set. Grids without an error
// (failed, pending, no exact solution) are left out, and so are groups
// left with none. It is an error when two groups have the same study name
// and parameters (give the studies distinct labels).
func NewBaseline(set table.Set) (*Baseline, error) {
	b := &Baseline{Format: BaselineFormat, Sweep: set.Sweep, Groups: []BaselineGroup{}}
	seen := map[string]bool{}
	for si := range set.Studies {
		st := &set.Studies[si]
		for _, g := range st.Groups {
			bg := BaselineGroup{Study: studyName(st), Group: g.Ident, Label: g.Label, Var: st.Var, Norm: st.Norm}
			for _, r := range g.Rows {
				if finite(r.Err) && r.Err > 0 {
					bg.Grids = append(bg.Grids, BaselineGrid{NX: r.NX, NY: r.NY, Error: r.Err, Order: ptr(r.Order)})
				}
			}
			if len(bg.Grids) == 0 {
				continue
			}
			if g.Fitted {
				bg.Fitted = ptr(g.Fit.Order)
			}
			key := groupKey(bg.Study, bg.Group)
			if seen[key] {
				return nil, fmt.Errorf("baseline: study %q has the group %q twice: give the studies distinct labels", bg.Study, bg.Group)
			}
			seen[key] = true
			b.Groups = append(b.Groups, bg)
		}
	}
	if len(b.Groups) == 0 {
		return nil, ErrNoGroups
	}
	return b, nil
}

// Write writes b as indented JSON.
func (b *Baseline) Write(w io.Writer) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(b)
}

// ReadBaseline reads a baseline written by Write; name names it in errors
// and reports. It refuses unknown keys, another format, a repeated group,
// and errors that are not positive and finite.
func ReadBaseline(r io.Reader, name string) (*Baseline, error) {
	src, err := io.ReadAll(io.LimitReader(r, MaxBaselineBytes+1))
	if err != nil {
		return nil, fmt.Errorf("baseline %s: %w", name, err)
	}
	if len(src) > MaxBaselineBytes {
		return nil, fmt.Errorf("baseline %s: larger than %d bytes", name, MaxBaselineBytes)
	}
	dec := json.NewDecoder(bytes.NewReader(src))
	dec.DisallowUnknownFields()
	var b Baseline
	if err := dec.Decode(&b); err != nil {
		return nil, fmt.Errorf("baseline %s: %w", name, err)
	}
	if dec.More() {
		return nil, fmt.Errorf("baseline %s: data after the JSON object", name)
	}
	if b.Format != BaselineFormat {
		return nil, fmt.Errorf("baseline %s: format %q, want %q", name, b.Format, BaselineFormat)
	}
	b.Name = name
	seen := map[string]bool{}
	for _, g := range b.Groups {
		key := groupKey(g.Study, g.Group)
		if seen[key] {
			return nil, fmt.Errorf("baseline %s: study %q has the group %q twice", name, g.Study, g.Group)
		}
		seen[key] = true
		for _, gr := range g.Grids {
			if !finite(gr.Error) || gr.Error <= 0 {
				return nil, fmt.Errorf("baseline %s: study %q group %q grid %s: error %v is not positive", name, g.Study, g.Group, gridName(gr.NX, gr.NY), gr.Error)
			}
		}
	}
	return &b, nil
}

// compare adds to c the findings and notes of group g of study st against
// its baseline bg (nil: the group is new).
func compare(c *Case, st *table.Study, g *table.Group, bg *BaselineGroup) {
	if bg == nil {
		c.Notes = append(c.Notes, "new group: not in the baseline")
		return
	}
	var fails, better []string
	if bg.Var != st.Var || bg.Norm != st.Norm {
		c.Failures = append(c.Failures, Finding{KindBaseline, fmt.Sprintf(
			"the baseline judges %s in %s, this run %s in %s: write the baseline again", bg.Var, bg.Norm, st.Var, st.Norm)})
		return
	}
	etol, otol := st.ErrorGrowthTol, st.OrderDropTol
	for _, bgr := range bg.Grids {
		grid := gridName(bgr.NX, bgr.NY)
		i := findRow(g, bgr.NX, bgr.NY)
		if i < 0 || !finite(g.Rows[i].Err) {
			fails = append(fails, fmt.Sprintf("grid %s: no error in this run (baseline %s)", grid, num(bgr.Error)))
			continue
		}
		r := g.Rows[i]
		rel := r.Err/bgr.Error - 1
		switch {
		case r.Err > bgr.Error*(1+etol):
			fails = append(fails, fmt.Sprintf("grid %s: %s error %s > baseline %s (%+.3g%%, tolerance %g)",
				grid, st.Norm, num(r.Err), num(bgr.Error), 100*rel, etol))
		case r.Err < bgr.Error*(1-etol):
			better = append(better, fmt.Sprintf("grid %s: %s error %s < baseline %s (%+.3g%%)", grid, st.Norm, num(r.Err), num(bgr.Error), 100*rel))
		}
		if bgr.Order != nil {
			f, b := orderChange(fmt.Sprintf("grid %s: observed order", grid), r.Order, *bgr.Order, otol)
			fails, better = append(fails, f...), append(better, b...)
		}
	}
	if bg.Fitted != nil {
		run := math.NaN()
		if g.Fitted {
			run = g.Fit.Order
		}
		f, b := orderChange("fitted order", run, *bg.Fitted, otol)
		fails, better = append(fails, f...), append(better, b...)
	}
	if len(fails) > 0 {
		c.Failures = append(c.Failures, Finding{KindBaseline, "against the baseline: " + strings.Join(fails, "; ")})
	}
	if len(better) > 0 {
		c.Notes = append(c.Notes, "improved over the baseline: "+strings.Join(better, "; "))
	}
}

// orderChange compares an order of the run with the baseline's: a drop by
// more than tol fails, a rise by more than tol is an improvement.
func orderChange(what string, run, base, tol float64) (fails, better []string) {
	switch {
	case !finite(run):
		fails = append(fails, fmt.Sprintf("%s none in this run (baseline %s)", what, num(base)))
	case run < base-tol:
		fails = append(fails, fmt.Sprintf("%s %s < baseline %s (drop %.3g, tolerance %g)", what, num(run), num(base), base-run, tol))
	case run > base+tol:
		better = append(better, fmt.Sprintf("%s %s > baseline %s", what, num(run), num(base)))
	}
	return fails, better
}

func findRow(g *table.Group, nx, ny int) int {
	for i, r := range g.Rows {
		if r.NX == nx && r.NY == ny {
			return i
		}
	}
	return -1
}
