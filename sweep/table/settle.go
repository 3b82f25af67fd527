package table

import (
	"fmt"
	"slices"

	"fvsweep/sweep/verify"
)

// settle judges, for a study that adds grids (refine.extend_to), whether
// g's observed order has settled (verify.Settle) and says of each grid
// beyond the spec's why it was added: the judgement of the grids before it.
// Rows are coarsest first.
func (st *Study) settle(g *Group) {
	design, ok := st.designOrder(g)
	if !ok {
		design = 0 // judged by the orders alone
	}
	rule := verify.SettleRule{Design: design, Tol: st.Tol, TolHi: st.TolHi, ExtendTo: st.ExtendTo}
	grids := make([]verify.GridResult, 0, len(g.Rows))
	for i, r := range g.Rows {
		n := r.NX
		if st.Refine == "ny" {
			n = r.NY
		}
		if !slices.Contains(st.Grids, n) {
			g.Rows[i].Added = verify.Settle(grids, rule).Reason
		}
		grids = append(grids, verify.GridResult{N: n, H: r.H, Err: r.Err, Pending: r.Status == "pending"})
	}
	s := verify.Settle(grids, rule)
	g.Settle, g.refine = &s, st.Refine
}

// SettleText is the settling of g in words, "" for a study that adds no
// grids.
func (g Group) SettleText() string {
	if g.Settle == nil {
		return ""
	}
	return g.Settle.Text(g.refine)
}

// AddedLines say which grids were added to g and why.
func (g Group) AddedLines() []string {
	var out []string
	for _, r := range g.Rows {
		if r.Added == "" {
			continue
		}
		n := r.NX
		if g.refine == "ny" {
			n = r.NY
		}
		out = append(out, fmt.Sprintf("added %s = %d: %s", g.refine, n, r.Added))
	}
	return out
}
