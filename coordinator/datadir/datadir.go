// Package datadir is a coordinator's data directory: where its store, its
// embedded server's files and its URL live, and the one way the commands
// read it, through the coordinator when one answers, else from the store
// opened read-only.
package datadir

import (
	"os"
	"path/filepath"
	"strings"
)

// Default is the data directory used when none is given.
const Default = "fvsweep-data"

// The entries of a data directory.
const (
	dbFile  = "fvsweep.db"      // the store
	natsDir = "nats"            // the embedded server's JetStream files
	urlFile = "coordinator.url" // client URL of the running coordinator
)

// Dir is the path of a data directory.
type Dir string

// DB is the path of the store.
func (d Dir) DB() string { return filepath.Join(string(d), dbFile) }

// NATS is the directory of the embedded server's JetStream files.
func (d Dir) NATS() string { return filepath.Join(string(d), natsDir) }

// URLFile is the file in which a running coordinator leaves the client
// URL of its NATS server, for the other commands to find it.
func (d Dir) URLFile() string { return filepath.Join(string(d), urlFile) }

// CoordinatorURL is given if not empty, else the URL a running coordinator
// wrote into the directory, else "".
func (d Dir) CoordinatorURL(given string) string {
	if given != "" {
		return given
	}
	b, err := os.ReadFile(d.URLFile())
	if err != nil {
		return ""
	}
	return strings.TrimSpace(string(b))
}

// WriteURL records url as the running coordinator's.
func (d Dir) WriteURL(url string) error { return os.WriteFile(d.URLFile(), []byte(url+"\n"), 0o644) }

// RemoveURL removes the URL file when the coordinator stops.
func (d Dir) RemoveURL() error { return os.Remove(d.URLFile()) }
