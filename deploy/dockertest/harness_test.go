package dockertest

import (
	"os"
	"strings"
	"testing"
	"time"
)

// TestHarness checks the harness itself on the version command: the image
// is built FROM scratch around a static binary that runs there, a second
// build of the same contents is the same image, and a container's logs are
// read. (TestDockerCluster uses exec, stop, disconnect and connect.)
func TestHarness(t *testing.T) {
	e := Require(t)
	img := e.Fvsweep(t)
	if again := e.Fvsweep(t); again.Tag != img.Tag {
		t.Fatalf("same contents built as %s and %s", img.Tag, again.Tag)
	}
	if base := e.Docker(t, "image", "inspect", "--format", "{{len .RootFS.Layers}}", img.Tag); strings.TrimSpace(base) != "5" {
		t.Errorf("image has %s layers, want 5 (scratch plus the binary and four config files)", strings.TrimSpace(base))
	}
	n := e.NewNetwork(t)
	c := e.Start(t, img, Spec{Stem: "harness", Network: n, Aliases: []string{"harness"}, Args: []string{"version"}})
	deadline := time.Now().Add(30 * time.Second)
	for c.Running() && time.Now().Before(deadline) {
		time.Sleep(100 * time.Millisecond)
	}
	if logs := c.Logs(); !strings.Contains(logs, "fvsweep ") || !strings.Contains(logs, "linux/") {
		t.Fatalf("version in a scratch container printed %q", logs)
	}
}

func TestMain(m *testing.M) { os.Exit(Main(m)) }

func TestStoreWrites(t *testing.T) {
	log := `plain text line
{"@level":"debug","@message":"stored results","batch":3,"written":3}
{"@level":"debug","@message":"stored results","batch":2,"written":0}
{"@level":"warn","@message":"job failed: delivery limit reached","job":"x"}
{"@message":"stored results","written":2
{"@level":"info","@message":"other","written":9}
`
	if got := StoreWrites(log); got != 4 {
		t.Errorf("StoreWrites = %d, want 3 + 0 + 1 (a truncated line and other messages do not count)", got)
	}
}
