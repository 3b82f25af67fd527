package main

import (
	"fmt"
	"runtime"
)

const version = "0.1.0-dev"

func init() {
	register(command{name: "version", summary: "print the version", run: func([]string) int {
		fmt.Printf("fvsweep %s %s %s/%s\n", version, runtime.Version(), runtime.GOOS, runtime.GOARCH)
		return 0
	}})
}
