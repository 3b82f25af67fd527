// Command fvsweep runs finite-volume parameter and grid-convergence sweeps.
// Each subcommand lives in its own file and registers itself with command.
package main

import (
	"fmt"
	"os"
	"sort"
)

// command is one subcommand: run parses its own flags from args and returns
// the process exit code.
type command struct {
	name    string
	summary string
	run     func(args []string) int
}

var commands = map[string]command{}

func register(c command) {
	if _, dup := commands[c.name]; dup {
		panic("duplicate command " + c.name)
	}
	commands[c.name] = c
}

func usage() {
	fmt.Fprintln(os.Stderr, "usage: fvsweep COMMAND [flags] [args]\n\ncommands:")
	names := make([]string, 0, len(commands))
	for n := range commands {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		fmt.Fprintf(os.Stderr, "  %-10s %s\n", n, commands[n].summary)
	}
	fmt.Fprintln(os.Stderr, "\nRun 'fvsweep COMMAND -h' for the flags of a command.")
}

func main() {
	if len(os.Args) < 2 || os.Args[1] == "-h" || os.Args[1] == "--help" || os.Args[1] == "help" {
		usage()
		if len(os.Args) < 2 {
			os.Exit(2)
		}
		return
	}
	c, ok := commands[os.Args[1]]
	if !ok {
		fmt.Fprintf(os.Stderr, "fvsweep: unknown command %q\n", os.Args[1])
		usage()
		os.Exit(2)
	}
	os.Exit(c.run(os.Args[2:]))
}

// fail prints a one-line error and returns exit code 1. format starts
// with the command's name ("table: %v"), so the line reads
// "fvsweep table: ...", as the commands that print their own errors do.
func fail(format string, args ...any) int {
	fmt.Fprintf(os.Stderr, "fvsweep "+format+"\n", args...)
	return 1
}
