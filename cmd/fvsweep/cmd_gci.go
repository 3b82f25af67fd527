package main

import (
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"fvsweep/sweep/table"
	"fvsweep/sweep/verify"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"text/tabwriter"
)

func init() {
	register(command{name: "gci", run: func(args []string) int { return runGCI(args, os.Stdout, os.Stderr) },
		summary: "grid convergence index of values from any code",
		about: `Discretisation-error estimate of a functional computed on several grids. The
default method, celik, is the procedure of Celik et al. 2008 (J. Fluids Eng.
130, 078001): apparent order, Richardson extrapolation, relative errors and
the grid convergence index of each successive triple. The method lsq is the
least-squares uncertainty of Eça & Hoekstra 2014 (J. Comput. Phys. 262,
104-130) over all grids, meant for four or more grids with scatter: the fits,
the chosen one, the observed order, its standard deviation and the
uncertainty U of every grid. The grids may be given in any order; they are
sorted by spacing and reported finest first. With two grids (celik only)
--order gives the assumed order (for example the design order) and the
factor of safety becomes 3. Implausible input or results (close grids,
orders out of range, differences at round-off level, too few grids) are
printed as warnings under the record, and listed under "warnings" in JSON.
All input is given by flags; -h alone asks for this help, -h with a value
gives the spacings.`,
		flags: []flagDoc{
			{"values", "PHI1,PHI2,...", "the functional on each grid, comma separated (required)", ""},
			{"cells", "N1,N2,...", "cell count of each grid (h = (1/N)^(1/dim)); needs --dim", ""},
			{"dim", "D", "space dimension for --cells: 1, 2 or 3", ""},
			{"h", "H1,H2,...", "grid spacing of each grid, instead of --cells", ""},
			{"method", "M", "celik, or lsq (three grids or more)", "celik"},
			{"order", "P", "assumed order, for two grids only (celik)", ""},
			{"fs", "F", "factor of safety (celik)", "1.25, or 3 for two grids"},
			{"design", "P", "design order of the scheme: an observed order above twice it is warned about, and for lsq the trusted orders become [0.5, design + 0.1) instead of [0.5, 2.1)", ""},
			{"json", "", `print JSON. celik: one record for two or three grids, otherwise {"records": [one per successive triple], "least_squares": {...}}; lsq: {"uncertainty" (fraction of |phi_1|), "uncertainty_abs", "extrapolated", "order", "fit", "sigma", "u" (every grid), ...}`, ""},
		},
		examples: []string{
			"fvsweep gci --values 5.863,5.972,6.063 --h 0.04,0.03,0.02",
			"fvsweep gci --values 6.063,5.972 --cells 16384,4096 --dim 2 --order 2",
			"fvsweep gci --values 1.0003,1.0012,1.0048,1.019 --h 1,2,4,8 --method lsq",
		}})
}

// gciFloats is a comma-separated list of finite numbers as a flag value.
type gciFloats []float64

func (l *gciFloats) String() string { return fmt.Sprint([]float64(*l)) }

func (l *gciFloats) Set(s string) error {
	*l = (*l)[:0]
	for _, f := range strings.Split(s, ",") {
		f = strings.TrimSpace(f)
		x, err := strconv.ParseFloat(f, 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			return fmt.Errorf("%q is not a finite number", f)
		}
		*l = append(*l, x)
	}
	return nil
}

// runGCI is the gci command: exit code 0 on success, 2 on bad flags or input.
func runGCI(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("gci", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	var values, cells, hs gciFloats
	fs.Var(&values, "values", "")
	fs.Var(&cells, "cells", "")
	fs.Var(&hs, "h", "")
	dim := fs.Int("dim", 0, "")
	order := fs.Float64("order", 0, "")
	safety := fs.Float64("fs", 0, "")
	design := fs.Float64("design", 0, "")
	method := fs.String("method", "celik", "")
	asJSON := fs.Bool("json", false, "")
	bad := func(format string, a ...any) int { return usageTo(stderr, "gci", format, a...) }
	if len(args) == 1 && (args[0] == "-h" || args[0] == "--h") {
		args = []string{"--help"} // -h alone asks for help; with a value it is the spacings flag
	}
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			showHelp(stdout, "gci", fs)
			return 0
		}
		return bad("%s", flagError(err))
	}
	if fs.NArg() > 0 {
		return bad("unexpected argument %q (all input is given by flags)", fs.Arg(0))
	}
	set := map[string]bool{}
	fs.Visit(func(f *flag.Flag) { set[f.Name] = true })
	h, code := gciSpacings(values, cells, hs, *dim, set, bad)
	if code != 0 {
		return code
	}
	if set["design"] && !(*design > 0 && !math.IsInf(*design, 1)) {
		return bad("--design %g: must be a positive number", *design)
	}
	switch *method {
	case "celik":
	case "lsq":
		return runGCILeastSquares(values, h, *design, set, *asJSON, stdout, stderr, bad)
	default:
		return bad("--method %q: must be celik or lsq", *method)
	}
	if set["order"] && !(*order > 0 && !math.IsInf(*order, 1)) {
		return bad("--order %g: must be a positive number", *order)
	}
	if len(values) == 2 && !set["order"] {
		return bad("--order is needed with two grids (the assumed order, for example the design order)")
	}
	if len(values) > 2 && set["order"] {
		return bad("--order is only for two grids; with %d grids the order is observed", len(values))
	}
	if set["fs"] && !(*safety > 0 && !math.IsInf(*safety, 1)) {
		return bad("--fs %g: must be a positive number", *safety)
	}
	st, err := verify.GCI(values, h, verify.GCIOptions{SafetyFactor: *safety, AssumedOrder: *order, DesignOrder: *design})
	if err != nil {
		return bad("%v", err)
	}
	if *asJSON {
		var v any = st
		if len(st.Phi) <= 3 {
			v = st.Records[0]
		}
		return gciEncode(v, stdout, stderr)
	}
	writeGCIText(stdout, st)
	return 0
}

// runGCILeastSquares is gci --method lsq.
func runGCILeastSquares(values, h []float64, design float64, set map[string]bool, asJSON bool,
	stdout, stderr io.Writer, bad func(string, ...any) int) int {
	for _, f := range []string{"order", "fs"} {
		if set[f] {
			return bad("--%s is for --method celik; lsq chooses its own order and factor of safety", f)
		}
	}
	if len(values) < 3 {
		return bad("--method lsq needs at least 3 grids, have %d", len(values))
	}
	u, err := verify.LeastSquaresUncertainty(values, h, verify.UncertaintyOptions{DesignOrder: design})
	if err != nil {
		return bad("%v", err)
	}
	if asJSON {
		return gciEncode(u, stdout, stderr)
	}
	writeLSQText(stdout, u)
	return 0
}

func gciEncode(v any, stdout, stderr io.Writer) int {
	enc := json.NewEncoder(stdout)
	enc.SetIndent("", "  ")
	if err := enc.Encode(v); err != nil {
		fmt.Fprintf(stderr, "fvsweep gci: %v\n", err)
		return 1
	}
	return 0
}

// gciSpacings checks the grid flags and returns the spacing of each grid.
func gciSpacings(values, cells, hs gciFloats, dim int, set map[string]bool, bad func(string, ...any) int) ([]float64, int) {
	switch {
	case !set["values"]:
		return nil, bad("--values is required")
	case set["cells"] == set["h"]:
		return nil, bad("give exactly one of --cells (with --dim) and --h")
	case len(values) < 2:
		return nil, bad("--values: need at least 2 grids, have %d", len(values))
	}
	if set["h"] {
		if set["dim"] {
			return nil, bad("--dim is only used with --cells")
		}
		if len(hs) != len(values) {
			return nil, bad("--h has %d spacings but --values has %d values", len(hs), len(values))
		}
		for i, x := range hs {
			if !(x > 0) {
				return nil, bad("--h: spacing %d is %g, must be > 0", i+1, x)
			}
		}
		return gciDistinct("--h", hs, hs, bad)
	}
	if !set["dim"] || dim < 1 || dim > 3 {
		return nil, bad("--dim must be 1, 2 or 3 with --cells")
	}
	if len(cells) != len(values) {
		return nil, bad("--cells has %d counts but --values has %d values", len(cells), len(values))
	}
	for i, n := range cells {
		if !(n >= 1) {
			return nil, bad("--cells: count %d is %g, must be >= 1", i+1, n)
		}
	}
	h, err := verify.SpacingsFromCells(cells, dim)
	if err != nil {
		return nil, bad("--cells: %v", err)
	}
	return gciDistinct("--cells", cells, h, bad)
}

func gciDistinct(name string, given, h []float64, bad func(string, ...any) int) ([]float64, int) {
	for i := range h {
		for j := i + 1; j < len(h); j++ {
			if h[i] == h[j] {
				return nil, bad("%s: grids %d and %d are the same size (%g)", name, i+1, j+1, given[i])
			}
		}
	}
	return h, 0
}

// writeGrids prints the grids, finest first.
func writeGrids(w io.Writer, h, phi []float64) {
	fmt.Fprintln(w, "grids, sorted finest first:")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "  grid\th\tphi")
	for i := range h {
		fmt.Fprintf(tw, "  %d\t%.6g\t%.10g\n", i+1, h[i], phi[i])
	}
	tw.Flush()
}

// writeRemarks prints notes and warnings under a record.
func writeRemarks(w io.Writer, notes, warnings []string) {
	for _, n := range notes {
		fmt.Fprintf(w, "  note: %s\n", n)
	}
	for _, n := range warnings {
		fmt.Fprintf(w, "  warning: %s\n", n)
	}
}

func writeGCIText(w io.Writer, st *verify.GCIStudy) {
	writeGrids(w, st.H, st.Phi)
	for _, r := range st.Records {
		fmt.Fprintln(w)
		names := make([]string, len(r.Grids))
		for i, g := range r.Grids {
			names[i] = strconv.Itoa(g + 1)
		}
		head := "grids " + strings.Join(names, ", ")
		if r.Convergence != "" {
			head += ": " + r.Convergence
			if r.Ratio != nil {
				head += fmt.Sprintf(" (R = eps21/eps32 = %.4g)", *r.Ratio)
			}
		}
		fmt.Fprintln(w, head)
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		ratios := fmt.Sprintf("%.4g", r.R21)
		if r.R32 != nil {
			ratios += fmt.Sprintf(", r32 = %.4g", *r.R32)
		}
		fmt.Fprintf(tw, "  refinement ratio\tr21 = %s\n", ratios)
		label := "apparent order p"
		if r.OrderAssumed {
			label = "assumed order p"
		}
		fmt.Fprintf(tw, "  %s\t%s\n", label, gciNum(r.Order, 'g', 4))
		fmt.Fprintf(tw, "  extrapolated phi_ext21\t%s\n", gciNum(r.Extrapolated, 'g', 10))
		fmt.Fprintf(tw, "  approximate error e_a21\t%s\n", gciPct(r.EApprox))
		fmt.Fprintf(tw, "  extrapolated error e_ext21\t%s\n", gciPct(r.EExtrap))
		fmt.Fprintf(tw, "  GCI_fine21 (Fs = %g)\t%s\n", r.SafetyFactor, gciPct(r.GCIFine))
		if r.R32 != nil {
			fmt.Fprintf(tw, "  GCI_32\t%s\n", gciPct(r.GCI32))
			fmt.Fprintf(tw, "  asymptotic ratio GCI_32/(r21^p GCI_21)\t%s\n", gciNum(r.AsymptoticRatio, 'g', 4))
		}
		tw.Flush()
		writeRemarks(w, r.Notes, r.Warnings)
	}
	if ls := st.LeastSquares; ls != nil {
		fmt.Fprintf(w, "\nleast squares over all %d grids, phi = phi_0 + alpha (h/h1)^p:\n", len(st.H))
		fmt.Fprintf(w, "  order p %s, phi_0 %s, rms residual %.3g\n",
			gciNum(ls.Order, 'g', 4), gciNum(ls.Extrapolated, 'g', 10), ls.ResidualRMS)
		writeRemarks(w, ls.Notes, ls.Warnings)
	}
}

func writeLSQText(w io.Writer, u *verify.Uncertainty) {
	writeGrids(w, u.H, u.Phi)
	fmt.Fprintf(w, "\nleast-squares uncertainty over %d grids (Eça & Hoekstra 2014):\n", len(u.H))
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fit := u.Fit
	if u.Weighted {
		fit += ", weighted"
	}
	fmt.Fprintf(tw, "  fit\t%s\n", fit)
	fmt.Fprintf(tw, "  observed order p\t%s\n", gciNum(u.Order, 'g', 4))
	fmt.Fprintf(tw, "  extrapolated phi_0\t%s\n", gciNum(u.Extrapolated, 'g', 10))
	fmt.Fprintf(tw, "  standard deviation sigma\t%.3g\n", u.Sigma)
	fmt.Fprintf(tw, "  data range Delta_M\t%.3g\n", u.DataRange)
	fmt.Fprintf(tw, "  factor of safety\t%.3g\n", u.SafetyFactor)
	fmt.Fprintf(tw, "  U of grid 1\t%.3g (%s)\n", u.UncertaintyAbs, gciPct(u.Uncertainty))
	tw.Flush()
	fmt.Fprintln(w, "  U of every grid:", strings.Trim(fmt.Sprintf("%.3g", u.U), "[]"))
	writeRemarks(w, u.Notes, u.Warnings)
}

// gciNum is x as table.Num.Format writes it, "undefined (see note)" when
// it is none: the notes under the record say why.
func gciNum(x *float64, f byte, prec int) string {
	if n := table.Ptr(x); n.OK() {
		return n.Format(f, prec)
	}
	return gciUndefined
}

// gciPct is x, a fraction, as table.Num.Percent writes it, "undefined (see
// note)" when it is none.
func gciPct(x *float64) string {
	if n := table.Ptr(x); n.OK() {
		return n.Percent()
	}
	return gciUndefined
}

const gciUndefined = "undefined (see note)"
