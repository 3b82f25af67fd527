package table

import (
	"encoding/csv"
	"io"
	"slices"
	"strconv"
	"strings"
)

// The columns of the csv table. Each line is one record: "grid" lines fill
// the grid columns (and phi:NAME for each functional of any study), "gci"
// lines the GCI columns of one record of verify.GCI (fractions, not
// percent), "gci-fit" lines the least-squares fit over four or more grids.
var (
	csvLead = []string{"record", "study", "label", "case", "var", "group"}
	csvGrid = []string{"job_id", "nx", "ny", "h", "L1", "L2", "Linf", "order", "wall_s", "status",
		"fitted_order", "fitted_order_se", "verdict"}
	csvGCI = []string{"functional", "grids_nx", "r21", "r32", "convergence", "apparent_order", "extrapolated",
		"e_approx", "e_extrap", "gci_fine", "asymptotic_ratio", "notes"}
)

func writeCSV(w io.Writer, s Set) error {
	var names []string // phi:NAME columns, first seen first
	for _, st := range s.Studies {
		for _, f := range st.Functionals {
			if !slices.Contains(names, f) {
				names = append(names, f)
			}
		}
	}
	width := len(csvLead) + len(csvGrid) + len(names) + len(csvGCI)
	gciAt := width - len(csvGCI)
	head := slices.Concat(csvLead, csvGrid)
	for _, n := range names {
		head = append(head, "phi:"+n)
	}
	cw := csv.NewWriter(w)
	cw.Write(append(head, csvGCI...))
	for _, st := range s.Studies {
		for _, g := range st.Groups {
			lead := func(kind string) []string {
				rec := make([]string, width)
				copy(rec, []string{kind, strconv.Itoa(st.Index), st.Label, st.Case, st.Var, g.Label})
				return rec
			}
			fit, fitSE := none, none
			if g.Fitted {
				fit, fitSE = Num(g.Fit.Order), Num(g.Fit.OrderSE)
			}
			for _, r := range g.Rows {
				rec := lead("grid")
				copy(rec[len(csvLead):], []string{r.JobID, strconv.Itoa(r.NX), strconv.Itoa(r.NY), Num(r.H).csv(),
					Num(r.L1).csv(), Num(r.L2).csv(), Num(r.Linf).csv(), Num(r.Order).csv(), strconv.FormatFloat(r.WallS, 'g', -1, 64),
					r.Status, fit.csv(), fitSE.csv(), g.Verdict.Status})
				for i, f := range st.Functionals {
					rec[len(csvLead)+len(csvGrid)+slices.Index(names, f)] = Num(r.Phi[i]).csv()
				}
				cw.Write(rec)
			}
			for _, f := range g.GCI {
				for _, r := range f.Records {
					rec := lead("gci")
					copy(rec[gciAt:], []string{f.Functional, f.GridNames(r.Grids), Num(r.R21).csv(), Ptr(r.R32).csv(),
						r.Convergence, Ptr(r.Order).csv(), Ptr(r.Extrapolated).csv(), Ptr(r.EApprox).csv(), Ptr(r.EExtrap).csv(),
						Ptr(r.GCIFine).csv(), Ptr(r.AsymptoticRatio).csv(), strings.Join(r.Notes, "; ")})
					cw.Write(rec)
				}
				if ls := f.LeastSquares; ls != nil {
					rec := lead("gci-fit")
					copy(rec[gciAt:], []string{f.Functional, f.GridNames(nil), "", "", "", Ptr(ls.Order).csv(),
						Ptr(ls.Extrapolated).csv(), "", "", "", "", strings.Join(ls.Notes, "; ")})
					cw.Write(rec)
				}
				if f.Note != "" {
					rec := lead("gci")
					rec[gciAt], rec[width-1] = f.Functional, f.Note
					cw.Write(rec)
				}
			}
		}
	}
	cw.Flush()
	return cw.Error()
}
