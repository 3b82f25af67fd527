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
// percent), "gci-fit" lines the least-squares fit over four or more grids,
// "gci-lsq" lines the least-squares uncertainty (its order and
// extrapolated value in the GCI columns, the rest in csvLSQ). The csvLSQ
// columns are there when some group has a least-squares uncertainty, and
// the warnings column (a record's plausibility warnings joined by "; ",
// on grid lines those of the group's verdict) when some record has a
// warning, so that the table of a sweep with neither keeps its layout.
var (
	csvLead = []string{"record", "study", "label", "case", "var", "group"}
	csvGrid = []string{"job_id", "nx", "ny", "h", "L1", "L2", "Linf", "order", "wall_s", "status",
		"fitted_order", "fitted_order_se", "verdict"}
	csvGCI = []string{"functional", "grids_nx", "r21", "r32", "convergence", "apparent_order", "extrapolated",
		"e_approx", "e_extrap", "gci_fine", "asymptotic_ratio", "notes"}
	csvLSQ  = []string{"fit", "weighted", "sigma", "safety_factor", "uncertainty", "uncertainty_abs"}
	csvWarn = []string{"warnings"}
)

// csvColumns says which optional columns s needs: csvLSQ when some group
// has a least-squares uncertainty, csvWarn when some record has a warning.
func csvColumns(s Set) (lsq, warn bool) {
	for _, st := range s.Studies {
		for _, g := range st.Groups {
			warn = warn || len(g.VerdictWarnings()) > 0
			for _, f := range g.GCI {
				lsq = lsq || f.LSQ != nil
				warn = warn || len(f.Warnings()) > 0
			}
		}
	}
	return lsq, warn
}

func writeCSV(w io.Writer, s Set) error {
	var names []string // phi:NAME columns, first seen first
	for _, st := range s.Studies {
		for _, f := range st.Functionals {
			if !slices.Contains(names, f) {
				names = append(names, f)
			}
		}
	}
	head := slices.Concat(csvLead, csvGrid)
	for _, n := range names {
		head = append(head, "phi:"+n)
	}
	gciAt := len(head)
	head = append(head, csvGCI...)
	lsqAt, warnAt := len(head), -1
	withLSQ, withWarn := csvColumns(s)
	if withLSQ {
		head = append(head, csvLSQ...)
	}
	if withWarn {
		warnAt = len(head)
		head = append(head, csvWarn...)
	}
	width, notesAt := len(head), gciAt+len(csvGCI)-1
	// warn writes ws into the warnings column of rec, if there is one.
	warn := func(rec []string, ws []string) {
		if warnAt >= 0 {
			rec[warnAt] = strings.Join(ws, "; ")
		}
	}
	cw := csv.NewWriter(w)
	cw.Write(head)
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
			var verdictWarnings []string
			if !g.Waiting() {
				verdictWarnings = g.Verdict.Warnings
			}
			for _, r := range g.Rows {
				rec := lead("grid")
				copy(rec[len(csvLead):], []string{r.JobID, strconv.Itoa(r.NX), strconv.Itoa(r.NY), Num(r.H).csv(),
					Num(r.L1).csv(), Num(r.L2).csv(), Num(r.Linf).csv(), Num(r.Order).csv(), strconv.FormatFloat(r.WallS, 'g', -1, 64),
					r.Status, fit.csv(), fitSE.csv(), g.Verdict.Status})
				for i, f := range st.Functionals {
					rec[len(csvLead)+len(csvGrid)+slices.Index(names, f)] = Num(r.Phi[i]).csv()
				}
				warn(rec, verdictWarnings)
				cw.Write(rec)
			}
			for _, f := range g.GCI {
				for _, r := range f.Records {
					rec := lead("gci")
					copy(rec[gciAt:], []string{f.Functional, f.GridNames(r.Grids), Num(r.R21).csv(), Ptr(r.R32).csv(),
						r.Convergence, Ptr(r.Order).csv(), Ptr(r.Extrapolated).csv(), Ptr(r.EApprox).csv(), Ptr(r.EExtrap).csv(),
						Ptr(r.GCIFine).csv(), Ptr(r.AsymptoticRatio).csv(), strings.Join(r.Notes, "; ")})
					warn(rec, r.Warnings)
					cw.Write(rec)
				}
				if ls := f.LeastSquares; ls != nil {
					rec := lead("gci-fit")
					copy(rec[gciAt:], []string{f.Functional, f.GridNames(nil), "", "", "", Ptr(ls.Order).csv(),
						Ptr(ls.Extrapolated).csv(), "", "", "", "", strings.Join(ls.Notes, "; ")})
					warn(rec, ls.Warnings)
					cw.Write(rec)
				}
				if u := f.LSQ; u != nil {
					rec := lead("gci-lsq")
					copy(rec[gciAt:], []string{f.Functional, f.GridNames(nil), "", "", "", Ptr(u.Order).csv(),
						Ptr(u.Extrapolated).csv(), "", "", "", "", strings.Join(u.Notes, "; ")})
					copy(rec[lsqAt:], []string{u.Fit, strconv.FormatBool(u.Weighted), Num(u.Sigma).csv(), Num(u.SafetyFactor).csv(), Ptr(u.Uncertainty).csv(), Num(u.UncertaintyAbs).csv()})
					warn(rec, u.Warnings)
					cw.Write(rec)
				}
				if f.Note != "" || f.LSQNote != "" {
					rec := lead("gci")
					rec[gciAt], rec[notesAt] = f.Functional, strings.Join(slices.DeleteFunc([]string{f.Note, f.LSQNote}, func(n string) bool { return n == "" }), "; ")
					cw.Write(rec)
				}
			}
		}
	}
	cw.Flush()
	return cw.Error()
}
