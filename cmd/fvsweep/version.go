package main

import (
	"flag"
	"fmt"
	"runtime"
)

const version = "0.1.0-dev"

func init() {
	register(command{name: "version", run: runVersion,
		summary: "print the version",
		about:   "Prints the version of fvsweep, the Go release it was built with, and the\noperating system and architecture. fvsweep --version does the same.",
		examples: []string{
			"fvsweep version",
		}})
}

func runVersion(args []string) int {
	if _, code, done := parseCommand("version", flag.NewFlagSet("version", flag.ContinueOnError), args); done {
		return code
	}
	fmt.Printf("fvsweep %s %s %s/%s\n", version, runtime.Version(), runtime.GOOS, runtime.GOARCH)
	return 0
}
