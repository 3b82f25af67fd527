package main

// The help of every command comes from its entry in the registry: a
// synopsis, a description, its flags with their meaning and default, and
// examples. One writer prints them all in one format, to stdout.

import (
	"flag"
	"fmt"
	"io"
	"os"
	"regexp"
	"sort"
	"strings"
)

// command is one subcommand, registered by the file that implements it.
type command struct {
	name string
	// args are the positional arguments in the synopsis, e.g. "SWEEP",
	// "[SWEEP]" (optional) or "SWEEP PLOT"; parse checks their count.
	args    string
	summary string // one line, in the list of commands
	about   string // the description: paragraphs separated by blank lines
	flags   []flagDoc
	// examples are command lines of the command.
	examples []string
	// run parses its own flags from args and returns the exit code:
	// 0 success, 1 failure, 2 bad usage, 130 interrupted.
	run func(args []string) int
}

// flagDoc documents one flag.
type flagDoc struct {
	name    string // without dashes
	arg     string // the value's placeholder, "" for a boolean flag
	meaning string
	def     string // the default, "" for none
}

var (
	commands = map[string]*command{}
	// aliases are old command names, kept for one release and not listed.
	aliases = map[string]string{}
)

func register(c command) {
	if _, dup := commands[c.name]; dup {
		panic("duplicate command " + c.name)
	}
	commands[c.name] = &c
}

// flagSet joins groups of flag docs, in order.
func flagSet(groups ...[]flagDoc) []flagDoc {
	var all []flagDoc
	for _, g := range groups {
		all = append(all, g...)
	}
	return all
}

// helpWidth is the width help text is wrapped to; flagColumn is where the
// meaning of a flag starts.
const (
	helpWidth  = 80
	flagColumn = 24
)

// writeHelp prints the help of c.
func writeHelp(w io.Writer, c *command) {
	syn := "fvsweep " + c.name
	if c.args != "" {
		syn += " " + c.args
	}
	if len(c.flags) > 0 {
		syn += " [flags]"
	}
	fmt.Fprintf(w, "usage: %s\n\n%s\n", syn, strings.TrimSpace(c.about))
	if len(c.flags) > 0 {
		fmt.Fprintln(w, "\nflags:")
		for _, f := range c.flags {
			writeFlag(w, f)
		}
	}
	fmt.Fprintln(w, "\nexamples:")
	for _, e := range c.examples {
		fmt.Fprintf(w, "  %s\n", e)
	}
}

// writeFlag prints one flag: "  --name ARG" and its meaning from
// flagColumn on, wrapped; a name too long for the column gets a line of
// its own.
func writeFlag(w io.Writer, f flagDoc) {
	left := "  --" + f.name
	if f.arg != "" {
		left += " " + f.arg
	}
	meaning := f.meaning
	if f.def != "" {
		meaning += " (default " + f.def + ")"
	}
	lines := wrap(meaning, helpWidth-flagColumn)
	pad := strings.Repeat(" ", flagColumn)
	if len(left) >= flagColumn-1 {
		fmt.Fprintln(w, left)
	} else {
		fmt.Fprintf(w, "%-*s%s\n", flagColumn, left, lines[0])
		lines = lines[1:]
	}
	for _, l := range lines {
		fmt.Fprintln(w, pad+l)
	}
}

// wrap breaks s into lines of at most width characters at spaces.
func wrap(s string, width int) []string {
	var lines []string
	line := ""
	for _, word := range strings.Fields(s) {
		if line != "" && len(line)+1+len(word) > width {
			lines = append(lines, line)
			line = ""
		}
		if line != "" {
			line += " "
		}
		line += word
	}
	return append(lines, line)
}

// writeCommands prints the top-level help: the commands and where to read more.
func writeCommands(w io.Writer) {
	fmt.Fprintln(w, "usage: fvsweep COMMAND [ARGS] [flags]")
	fmt.Fprintln(w, "\nRuns finite-volume parameter and grid-convergence sweeps: expand a spec into")
	fmt.Fprintln(w, "jobs, run them on this machine or on workers, and judge the observed orders.")
	fmt.Fprintln(w, "\ncommands:")
	names := make([]string, 0, len(commands))
	for n := range commands {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		fmt.Fprintf(w, "  %-10s %s\n", n, commands[n].summary)
	}
	fmt.Fprintln(w, "\nexamples:")
	fmt.Fprintln(w, "  fvsweep help run                          # the flags and examples of one command")
	fmt.Fprintln(w, "  fvsweep expand configs/blast-limiters.toml  # what a spec expands to")
	fmt.Fprintln(w, "  fvsweep run configs/blast-limiters.toml     # run it here, print the tables")
}

// usageErr reports a bad command line: exit code 2.
func usageErr(cmd string, format string, a ...any) int {
	return usageTo(os.Stderr, cmd, format, a...)
}

func usageTo(w io.Writer, cmd string, format string, a ...any) int {
	fmt.Fprintf(w, "fvsweep %s: %s (see fvsweep %s --help)\n", cmd, fmt.Sprintf(format, a...), cmd)
	return 2
}

// flagErrors are the errors of the flag package, which echo a flag with
// one dash, and how fvsweep says them.
var flagErrors = []struct {
	re   *regexp.Regexp
	with string
}{
	{regexp.MustCompile(`^invalid (?:boolean )?value ("[^"]*") for (?:flag )?-+([\w-]+): `), "--$2 $1: "},
	{regexp.MustCompile(`^flag provided but not defined: -+([\w-]+)$`), "unknown flag --$1"},
	{regexp.MustCompile(`^flag needs an argument: -+([\w-]+)$`), "--$1 needs a value"},
}

// flagError says an error of the flag package with flags as they are
// documented, with two dashes.
func flagError(err error) string {
	msg := err.Error()
	for _, e := range flagErrors {
		if e.re.MatchString(msg) {
			return e.re.ReplaceAllString(msg, e.with)
		}
	}
	return msg
}

// parseArgs parses flags that may come before or after the positional
// arguments and returns those. A help request returns flag.ErrHelp.
func parseArgs(fs *flag.FlagSet, args []string) ([]string, error) {
	fs.SetOutput(io.Discard)
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			return nil, err
		}
		if fs.NArg() == 0 {
			break
		}
		pos, args = append(pos, fs.Arg(0)), fs.Args()[1:]
	}
	return pos, resolveSecrets(fs)
}

// helpSeen, if set (by tests), receives the flag set of a command asked
// for its help, to hold the help against the flags it takes.
var helpSeen func(cmd string, fs *flag.FlagSet)

// showHelp answers a help request to command cmd, whose flags are fs.
func showHelp(w io.Writer, cmd string, fs *flag.FlagSet) {
	if helpSeen != nil {
		helpSeen(cmd, fs)
	}
	writeHelp(w, commands[cmd])
}

// parseCommand parses args of command cmd (flags before or after the
// positional arguments). On a help request it prints the help to stdout;
// on bad usage an error to stderr; both return done with the exit code.
func parseCommand(cmd string, fs *flag.FlagSet, args []string) (pos []string, code int, done bool) {
	return parseWith(cmd, fs, args, os.Stdout, os.Stderr)
}

// parseWith is parseCommand writing to stdout and stderr.
func parseWith(cmd string, fs *flag.FlagSet, args []string, stdout, stderr io.Writer) (pos []string, code int, done bool) {
	c := commands[cmd]
	pos, err := parseArgs(fs, args)
	if err == flag.ErrHelp {
		showHelp(stdout, cmd, fs)
		return nil, 0, true
	}
	if err != nil {
		return nil, usageTo(stderr, cmd, "%s", flagError(err)), true
	}
	if msg := checkArgs(c.args, pos); msg != "" {
		return nil, usageTo(stderr, cmd, "%s", msg), true
	}
	return pos, 0, false
}

// checkArgs holds positional arguments against the synopsis args: a word
// in brackets is optional; it returns what is wrong, or "".
func checkArgs(args string, pos []string) string {
	words := strings.Fields(args)
	for i, w := range words {
		if i >= len(pos) && !strings.HasPrefix(w, "[") {
			return "missing " + w
		}
	}
	if len(pos) > len(words) {
		return fmt.Sprintf("unexpected argument %q", pos[len(words)])
	}
	return ""
}

// alias adds old as a hidden spelling of the flag name already on fs, kept
// for one release: it sets the same value and warns.
func alias(fs *flag.FlagSet, old, name string) {
	f := fs.Lookup(name)
	fs.Var(aliasValue{Value: f.Value, old: old, name: name}, old, "")
	hiddenFlags[old] = true
}

// hiddenFlags are the deprecated spellings of flags, not in the help.
var hiddenFlags = map[string]bool{}

type aliasValue struct {
	flag.Value
	old, name string
}

func (a aliasValue) Set(s string) error {
	fmt.Fprintf(os.Stderr, "fvsweep: warning: --%s is deprecated; use --%s\n", a.old, a.name)
	return a.Value.Set(s)
}

// IsBoolFlag lets a boolean flag's alias take no value.
func (a aliasValue) IsBoolFlag() bool {
	b, ok := a.Value.(interface{ IsBoolFlag() bool })
	return ok && b.IsBoolFlag()
}
