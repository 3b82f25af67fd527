package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"os/signal"
	"sort"
	"strings"

	"fvsweep/fv2d"
	"fvsweep/sweep/field"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/table"
)

func init() {
	register(command{name: "solve", args: "CASE", run: func(args []string) int { return solveMain(args, os.Stdout, os.Stderr) },
		summary: "run one case locally and report totals, errors and speed",
		about: `Runs one case in this process, with no server and no store, and prints
its parameters, the grid and steps, the wall time and cell updates per
second, the conserved totals at the start and the end, the errors against
the exact solution (where the case has one) and its functionals. Ctrl-C
stops it (exit 130).`,
		flags: []flagDoc{
			{"p", "KEY=VALUE", "a parameter of the case, repeatable (see fvsweep cases CASE)", ""},
			{"json", "", "print the report as JSON", ""},
			{"dump", "FILE", "write the final cell averages as CSV to FILE: x, y and the primitive variables", ""},
			{"mem-limit", "SIZE", "refuse a run whose memory estimate exceeds SIZE", "8GiB"},
		},
		examples: []string{
			"fvsweep solve vortex -p nx=64 -p ny=64",
			"fvsweep solve shocktube -p test=1 -p scheme=muscl --dump tube.csv",
		}})
}

// kvFlags collects repeated -p key=value settings.
type kvFlags map[string]string

func (kv kvFlags) String() string { return "" }

func (kv kvFlags) Set(s string) error {
	k, val, ok := strings.Cut(s, "=")
	k = strings.TrimSpace(k)
	if !ok || k == "" {
		return fmt.Errorf("%q is not key=value", s)
	}
	if _, dup := kv[k]; dup {
		return fmt.Errorf("parameter %s given twice", k)
	}
	kv[k] = strings.TrimSpace(val)
	return nil
}

// solveMain is `fvsweep solve CASE [-p key=value]... [--json] [--dump FILE.csv]`.
func solveMain(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("solve", flag.ContinueOnError)
	kv := kvFlags{}
	fs.Var(kv, "p", "")
	asJSON := fs.Bool("json", false, "")
	dump := fs.String("dump", "", "")
	memLimit := fs.String("mem-limit", "8GiB", "")
	pos, code, done := parseWith("solve", fs, args, stdout, stderr)
	if done {
		return code
	}
	name := pos[0]
	maxBytes, err := spec.ParseBytes(*memLimit)
	if err != nil {
		return usageTo(stderr, "solve", "--mem-limit: %v", err)
	}
	v, err := fv2d.Resolve(name, kv)
	if err != nil {
		fmt.Fprintf(stderr, "fvsweep solve: %v\n", err)
		return 1
	}
	// The same guard as a spec's: a grid too large for memory is refused
	// before it is allocated, not left to crash the runtime.
	if c := fv2d.Estimate(v); c.Bytes > maxBytes {
		fmt.Fprintf(stderr, "fvsweep solve: case %s: grid %sx%s needs an estimated %.3g GiB, over --mem-limit %s\n",
			name, v.Get("nx"), v.Get("ny"), float64(c.Bytes)/(1<<30), *memLimit)
		return 1
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	res, err := fv2d.Run(ctx, v)
	if errors.Is(err, context.Canceled) {
		fmt.Fprintf(stderr, "fvsweep solve: %s: interrupted\n", name)
		return 130 // the shell's code for a run ended by SIGINT
	}
	if err != nil {
		fmt.Fprintf(stderr, "fvsweep solve: %s: %v\n", name, err)
		return 1
	}
	if *dump != "" {
		if err := dumpCSV(*dump, res.Final); err != nil {
			fmt.Fprintf(stderr, "fvsweep solve: --dump %s: %v\n", *dump, err)
			return 1
		}
	}
	if *asJSON {
		b, err := json.MarshalIndent(reportJSON(res), "", "  ")
		if err != nil {
			fmt.Fprintf(stderr, "fvsweep solve: %v\n", err)
			return 1
		}
		fmt.Fprintf(stdout, "%s\n", b)
		return 0
	}
	printReport(stdout, res)
	return 0
}

// reportJSON is the Result as JSON with non-finite numbers as null.
func reportJSON(r *fv2d.Result) map[string]any {
	out := map[string]any{
		"case": r.Case, "params": r.Params, "nx": r.NX, "ny": r.NY, "steps": r.Steps,
		"t_final": table.Num(r.TFinal), "wall_s": table.Num(r.WallS), "cell_updates_per_s": table.Num(r.CellUpdatesPerS),
	}
	totals := map[string]map[string]table.Num{}
	for k, t := range r.Totals {
		totals[k] = map[string]table.Num{"initial": table.Num(t.Initial), "final": table.Num(t.Final)}
	}
	out["totals"] = totals
	if r.Errors != nil {
		errs := map[string]map[string]table.Num{}
		for k, n := range r.Errors {
			errs[k] = map[string]table.Num{"l1": table.Num(n.L1), "l2": table.Num(n.L2), "linf": table.Num(n.Linf)}
		}
		out["errors"] = errs
	}
	if r.Functionals != nil {
		fn := map[string]table.Num{}
		for k, x := range r.Functionals {
			fn[k] = table.Num(x)
		}
		out["functionals"] = fn
	}
	return out
}

func printReport(w io.Writer, r *fv2d.Result) {
	vars := r.Final.Eq.Vars()
	fmt.Fprintf(w, "case        %s\n", r.Case)
	keys := make([]string, 0, len(r.Params))
	for k := range r.Params {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	var ps []string
	for _, k := range keys {
		ps = append(ps, k+"="+r.Params[k])
	}
	fmt.Fprintf(w, "params      %s\n", strings.Join(ps, " "))
	fmt.Fprintf(w, "grid        %d x %d cells, %d steps to t = %.6g\n", r.NX, r.NY, r.Steps, r.TFinal)
	fmt.Fprintf(w, "wall        %.3f s, %.4g cell updates/s\n", r.WallS, r.CellUpdatesPerS)
	// The change is relative to the initial total, or absolute (marked) when
	// that total is 0.
	fmt.Fprintf(w, "\n%-10s %22s %22s %16s\n", "total", "initial", "final", "change")
	for _, k := range vars {
		t := r.Totals[k]
		d, unit := t.Final-t.Initial, "rel"
		if t.Initial != 0 {
			d /= math.Abs(t.Initial)
		} else {
			unit = "abs"
		}
		fmt.Fprintf(w, "%-10s %22.15g %22.15g %12.3e %s\n", k, t.Initial, t.Final, d, unit)
	}
	if r.Errors == nil {
		fmt.Fprintf(w, "\nerror       none: no exact solution for these parameters\n")
	} else {
		fmt.Fprintf(w, "\n%-10s %12s %12s %12s\n", "error", "L1", "L2", "Linf")
		for _, k := range vars {
			n := r.Errors[k]
			fmt.Fprintf(w, "%-10s %12.5e %12.5e %12.5e\n", k, n.L1, n.L2, n.Linf)
		}
	}
	if len(r.Functionals) > 0 {
		fmt.Fprintf(w, "\n%-12s %22s\n", "functional", "value")
		names := make([]string, 0, len(r.Functionals))
		for k := range r.Functionals {
			names = append(names, k)
		}
		sort.Strings(names)
		for _, k := range names {
			fmt.Fprintf(w, "%-12s %22.15g\n", k, r.Functionals[k])
		}
	}
}

// dumpCSV writes one row per cell: the centre and the primitive variables
// (field.WriteCSV).
func dumpCSV(path string, s *fv2d.State) error {
	c := field.NewCells(s.Eq.PrimVars(), s.NX, s.NY)
	w := make([]float64, len(c.Names))
	for j := range s.NY {
		for i := range s.NX {
			s.Primitive(i, j, w)
			for k, q := range w {
				c.Data[k][j*s.NX+i] = q
			}
		}
	}
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	if err := field.WriteCSV(f, c.WithCentres(s.X0, s.Y0, s.DX, s.DY)); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}
