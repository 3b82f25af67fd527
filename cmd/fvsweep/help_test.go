package main

import (
	"flag"
	"io"
	"os"
	"slices"
	"sort"
	"strings"
	"testing"
)

// runCLI runs dispatch(args) with stdout and stderr captured.
func runCLI(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	outR, outW, _ := os.Pipe()
	errR, errW, _ := os.Pipe()
	oldOut, oldErr := os.Stdout, os.Stderr
	os.Stdout, os.Stderr = outW, errW
	read := func(r *os.File, s *string, done chan struct{}) {
		b, _ := io.ReadAll(r)
		*s = string(b)
		close(done)
	}
	d1, d2 := make(chan struct{}), make(chan struct{})
	go read(outR, &stdout, d1)
	go read(errR, &stderr, d2)
	defer func() {
		os.Stdout, os.Stderr = oldOut, oldErr
	}()
	code = dispatch(args)
	outW.Close()
	errW.Close()
	<-d1
	<-d2
	return code, stdout, stderr
}

func commandNames() []string {
	var names []string
	for n := range commands {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}

// Every command's help has the one format: on stdout, exit 0, the
// headings in order, flags aligned in one column and wrapped to 80
// columns, examples of the command itself, and every flag it takes (but
// the deprecated spellings) documented once.
func TestHelpOfEveryCommand(t *testing.T) {
	taken := map[string]*flag.FlagSet{}
	helpSeen = func(cmd string, fs *flag.FlagSet) { taken[cmd] = fs }
	defer func() { helpSeen = nil }()
	for _, name := range commandNames() {
		c := commands[name]
		var first string
		for _, req := range [][]string{{name, "--help"}, {name, "-h"}, {"help", name}} {
			code, out, errs := runCLI(t, req...)
			if code != 0 || errs != "" {
				t.Errorf("%v: exit %d, stderr %q; want 0 and nothing", req, code, errs)
			}
			if first == "" {
				first = out
			} else if out != first {
				t.Errorf("%v: differs from %s --help", req, name)
			}
		}
		checkHelpFormat(t, c, first)
		fs, ok := taken[name]
		if !ok {
			t.Errorf("%s --help: not answered through its flag set", name)
			continue
		}
		documented := map[string]bool{}
		for _, f := range c.flags {
			if documented[f.name] {
				t.Errorf("%s: --%s documented twice", name, f.name)
			}
			documented[f.name] = true
			if fs.Lookup(f.name) == nil {
				t.Errorf("%s: --%s documented but not taken", name, f.name)
			}
		}
		fs.VisitAll(func(f *flag.Flag) {
			if hiddenFlags[f.Name] {
				if strings.Contains(first, "--"+f.Name+" ") || strings.Contains(first, "--"+f.Name+"\n") {
					t.Errorf("%s: deprecated --%s shown in the help", name, f.Name)
				}
				return
			}
			if !strings.Contains(first, "--"+f.Name) {
				t.Errorf("%s: takes --%s, which its help does not mention", name, f.Name)
			}
		})
	}
}

func checkHelpFormat(t *testing.T, c *command, out string) {
	t.Helper()
	lines := strings.Split(strings.TrimSuffix(out, "\n"), "\n")
	if !strings.HasPrefix(lines[0], "usage: fvsweep "+c.name) || lines[1] != "" || strings.TrimSpace(lines[2]) == "" {
		t.Errorf("%s: help starts %q; want the usage line, a blank line and the description", c.name, lines[:3])
	}
	var headings []string
	section := ""
	for i, l := range lines {
		if len(l) > helpWidth {
			t.Errorf("%s: line %d is %d characters: %q", c.name, i+1, len(l), l)
		}
		if l == "flags:" || l == "examples:" {
			if lines[i-1] != "" {
				t.Errorf("%s: no blank line before %q", c.name, l)
			}
			section = l
			headings = append(headings, l)
			continue
		}
		switch section {
		case "flags:":
			long := strings.HasPrefix(l, "  --") && len(strings.Fields(l)) <= 2 && len(l) >= flagColumn-1
			switch {
			case long:
			case strings.HasPrefix(l, "  --"):
				if l[flagColumn-1] != ' ' || l[flagColumn] == ' ' {
					t.Errorf("%s: flag line %q: meaning not at column %d", c.name, l, flagColumn+1)
				}
			case strings.HasPrefix(l, strings.Repeat(" ", flagColumn)) && l[flagColumn] != ' ':
			case l == "" && lines[i+1] == "examples:":
			default:
				t.Errorf("%s: line %q in flags: neither a flag nor its meaning at column %d", c.name, l, flagColumn+1)
			}
		case "examples:":
			if !strings.HasPrefix(l, "  fvsweep "+c.name+" ") && l != "  fvsweep "+c.name {
				t.Errorf("%s: example %q is not a command line of fvsweep %s", c.name, l, c.name)
			}
		}
	}
	want := []string{"examples:"}
	if len(c.flags) > 0 {
		want = []string{"flags:", "examples:"}
	}
	if !slices.Equal(headings, want) {
		t.Errorf("%s: headings %q, want %q", c.name, headings, want)
	}
}

// The list of commands goes to stdout when asked for, to stderr with exit
// 2 when no command is given; --version is the version command.
func TestTopLevelHelpAndVersion(t *testing.T) {
	for _, req := range [][]string{{"--help"}, {"-h"}, {"help"}} {
		code, out, errs := runCLI(t, req...)
		if code != 0 || errs != "" || !strings.HasPrefix(out, "usage: fvsweep COMMAND") {
			t.Errorf("%v: exit %d, stdout %.40q, stderr %q", req, code, out, errs)
		}
		for _, n := range commandNames() {
			if !strings.Contains(out, "\n  "+n+" ") {
				t.Errorf("%v: command %s not listed", req, n)
			}
		}
		if strings.Contains(out, "  plan ") {
			t.Errorf("%v: the deprecated plan is listed", req)
		}
	}
	if code, out, errs := runCLI(t); code != 2 || out != "" || !strings.HasPrefix(errs, "usage: fvsweep COMMAND") {
		t.Errorf("no command: exit %d, stdout %q, stderr %.40q; want 2 and the list on stderr", code, out, errs)
	}
	_, v1, _ := runCLI(t, "version")
	code, v2, _ := runCLI(t, "--version")
	if code != 0 || v1 != v2 || !strings.HasPrefix(v1, "fvsweep "+version+" ") {
		t.Errorf("--version: exit %d, %q; version: %q", code, v2, v1)
	}
	if code, _, errs := runCLI(t, "nosuch"); code != 2 || !strings.Contains(errs, `unknown command "nosuch"`) {
		t.Errorf("unknown command: exit %d, %q", code, errs)
	}
}

// A missing or extra argument and a bad flag read the same in every
// command: the command, what is wrong with flags spelt with two dashes,
// and where the help is; exit 2.
func TestUsageErrorsReadAlike(t *testing.T) {
	dir := t.TempDir()
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"table"}, "fvsweep table: missing SWEEP (see fvsweep table --help)"},
		{[]string{"export"}, "fvsweep export: missing SWEEP (see fvsweep export --help)"},
		{[]string{"cancel"}, "fvsweep cancel: missing SWEEP (see fvsweep cancel --help)"},
		{[]string{"forget"}, "fvsweep forget: missing SWEEP (see fvsweep forget --help)"},
		{[]string{"report", "--out", dir}, "fvsweep report: missing SWEEP (see fvsweep report --help)"},
		{[]string{"plot"}, "fvsweep plot: missing SWEEP (see fvsweep plot --help)"},
		{[]string{"run"}, "fvsweep run: missing SPEC (see fvsweep run --help)"},
		{[]string{"submit"}, "fvsweep submit: missing SPEC (see fvsweep submit --help)"},
		{[]string{"expand"}, "fvsweep expand: missing SPEC (see fvsweep expand --help)"},
		{[]string{"solve"}, "fvsweep solve: missing CASE (see fvsweep solve --help)"},
		{[]string{"status", "a", "b"}, `fvsweep status: unexpected argument "b" (see fvsweep status --help)`},
		{[]string{"serve", "x"}, `fvsweep serve: unexpected argument "x" (see fvsweep serve --help)`},
		{[]string{"cases", "a", "b"}, `fvsweep cases: unexpected argument "b" (see fvsweep cases --help)`},
		{[]string{"table", "s", "-job-limit", "3"}, "fvsweep table: unknown flag --job-limit (see fvsweep table --help)"},
		{[]string{"table", "s", "--norm"}, "fvsweep table: --norm needs a value (see fvsweep table --help)"},
		{[]string{"table", "s", "--format", "yaml"}, `fvsweep table: --format "yaml": want text, markdown, csv or json (see fvsweep table --help)`},
		{[]string{"table", "s", "--norm", "l3"}, `fvsweep table: --norm "l3": want l1, l2 or linf (see fvsweep table --help)`},
		{[]string{"gci", "--values", "1,2,3", "-bogus"}, "fvsweep gci: unknown flag --bogus (see fvsweep gci --help)"},
		{[]string{"solve", "vortex", "-p", "nx"}, `fvsweep solve: --p "nx": "nx" is not key=value (see fvsweep solve --help)`},
	} {
		code, out, errs := runCLI(t, tc.args...)
		if code != 2 || out != "" || strings.TrimSpace(errs) != tc.want {
			t.Errorf("%v: exit %d, stdout %q, stderr %q; want 2 and %q", tc.args, code, out, errs, tc.want)
		}
	}
}

// Every numeric flag has a range: a value outside is bad usage (exit 2)
// before anything starts.
func TestNumericFlagRanges(t *testing.T) {
	spec := writeSpec(t, planTestSpec)
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"run", spec, "--workers", "0"}, `--workers "0": want 1 to 1024`},
		{[]string{"run", spec, "--slots", "-1"}, `--slots "-1": want 1 to 256`},
		{[]string{"run", spec, "--concurrency", "-1"}, `--concurrency "-1": want 1 to 256`},
		{[]string{"run", spec, "--slots", "257"}, `--slots "257": want 1 to 256`},
		{[]string{"worker", "--slots", "0"}, `--slots "0": want 1 to 256`},
		{[]string{"serve", "--replicas", "6"}, `--replicas "6": want 1 to 5`},
		{[]string{"serve", "--ack-wait", "1ms"}, `--ack-wait "1ms": want at least 100ms`},
		{[]string{"serve", "--max-deliver", "0"}, `--max-deliver "0": want at least 1`},
		{[]string{"serve", "--reconcile", "-1s"}, `--reconcile "-1s": want at least 0s`},
		{[]string{"serve", "--max-workers", "0"}, `--max-workers "0": want at least 1`},
		{[]string{"serve", "--report-every-max", "1s"}, `--report-every-max "1s": want at least 2s`},
		{[]string{"submit", spec, "--job-limit", "-5"}, `--job-limit "-5": want at least 1`},
		{[]string{"forget", "s", "--study", "0"}, `--study "0": want at least 1`},
		{[]string{"plot", "s", "order-map", "--coarse", "-2", "--out", "x.png"}, `--coarse "-2": want at least 1`},
		{[]string{"run", spec, "--workers", "two"}, `--workers "two": not a whole number`},
	} {
		code, _, errs := runCLI(t, tc.args...)
		if code != 2 || !strings.Contains(errs, tc.want) {
			t.Errorf("%v: exit %d, stderr %q; want 2 and %q", tc.args, code, errs, tc.want)
		}
	}
}
