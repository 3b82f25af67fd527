// Command fvsweep runs finite-volume parameter and grid-convergence sweeps.
// Each subcommand lives in its own file and registers itself with command
// (help.go), with the text of its help.
package main

import (
	"fmt"
	"os"
)

func main() { os.Exit(dispatch(os.Args[1:])) }

// dispatch runs the command named by args[0] and returns the exit code.
func dispatch(args []string) int {
	if len(args) == 0 {
		writeCommands(os.Stderr)
		return 2
	}
	name, rest := args[0], args[1:]
	switch name {
	case "-h", "--help":
		writeCommands(os.Stdout)
		return 0
	case "help":
		if len(rest) == 0 {
			writeCommands(os.Stdout)
			return 0
		}
		c, ok := lookup(rest[0])
		if !ok || len(rest) > 1 {
			return usageErr("help", "unknown command %q", rest[0])
		}
		writeHelp(os.Stdout, c)
		return 0
	case "-version", "--version":
		name = "version"
	}
	c, ok := lookup(name)
	if !ok {
		fmt.Fprintf(os.Stderr, "fvsweep: unknown command %q (see fvsweep --help)\n", name)
		return 2
	}
	if name != c.name {
		fmt.Fprintf(os.Stderr, "fvsweep: warning: %s is deprecated; use fvsweep %s\n", name, c.name)
	}
	return c.run(rest)
}

// lookup finds a command by its name or a deprecated alias.
func lookup(name string) (*command, bool) {
	if n, ok := aliases[name]; ok {
		name = n
	}
	c, ok := commands[name]
	return c, ok
}

// fail prints a one-line error and returns exit code 1. format starts
// with the command's name ("table: %v"), so the line reads
// "fvsweep table: ...", as the commands that print their own errors do.
func fail(format string, args ...any) int {
	fmt.Fprintf(os.Stderr, "fvsweep "+format+"\n", args...)
	return 1
}
