package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"fvsweep/coordinator/datadir"
)

// specFiles writes the spec src into a temporary directory and names a
// data directory beside it.
func specFiles(t *testing.T, src string) (spec, data string) {
	dir := t.TempDir()
	spec = filepath.Join(dir, "spec.toml")
	if err := os.WriteFile(spec, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	return spec, filepath.Join(dir, "data")
}

// serve's status page answers status --http with what status gives over
// NATS, and asks for its token.
func TestStatusThroughStatusPage(t *testing.T) {
	spec, data := specFiles(t, cliSpec)
	c := &common{data: data, logLevel: "warn"}
	log, _ := c.logger("test")
	s, err := startService(c, defaultServerFlags(), "", log, nil)
	if err != nil {
		t.Fatal(err)
	}
	defer s.close()
	wf := webFlags{addr: "127.0.0.1:0", token: "page-secret"}
	code, out := capture(t, func() int {
		if err := wf.start(s, c, log); err != nil {
			t.Fatal(err)
		}
		return 0
	})
	if code != 0 || !strings.Contains(out, "status page: "+s.web.URL()) || strings.Contains(out, "page-secret") {
		t.Fatalf("start: %q", out)
	}
	if code, out := capture(t, func() int { return runSubmit([]string{spec, "--data", data}) }); code != 0 {
		t.Fatalf("submit: exit %d\n%s", code, out)
	}
	code, viaNATS := capture(t, func() int { return runStatus([]string{"cli", "--json", "--data", data}) })
	if code != 0 {
		t.Fatalf("status: exit %d\n%s", code, viaNATS)
	}
	code, viaPage := capture(t, func() int {
		return runStatus([]string{"cli", "--json", "--http", s.web.URL(), "--http-token", "page-secret"})
	})
	var a, b map[string]any
	if code != 0 || json.Unmarshal([]byte(viaNATS), &a) != nil || json.Unmarshal([]byte(viaPage), &b) != nil {
		t.Fatalf("status --http: exit %d\n%s", code, viaPage)
	}
	if !reflect.DeepEqual(a, b) || b["queued"] != 8.0 {
		t.Errorf("status over NATS\n%s\nand through the page\n%s", viaNATS, viaPage)
	}
	code, out = capture(t, func() int {
		return runStatus([]string{"--http", strings.TrimPrefix(s.web.URL(), "http://"), "--http-token", "page-secret"})
	})
	if code != 0 || !strings.Contains(out, "cli") || !strings.Contains(out, "0 live workers") {
		t.Errorf("status --http HOST:PORT: exit %d\n%s", code, out)
	}
	if code, _ := capture(t, func() int { return runStatus([]string{"--http", s.web.URL()}) }); code != 1 {
		t.Errorf("status --http without the token: exit %d, want 1", code)
	}
}

// --http beyond loopback without a token is refused before anything starts.
func TestRunRefusesOpenStatusPage(t *testing.T) {
	spec, data := specFiles(t, cliSpec)
	t.Setenv("FVSWEEP_TOKEN", "")
	t.Setenv("FVSWEEP_HTTP_TOKEN", "")
	for _, cmd := range []func([]string) int{runRun, func(a []string) int { return runServe(a[1:]) }} {
		code, _ := capture(t, func() int {
			return cmd([]string{spec, "--data", data, "--http", "0.0.0.0:0", "--listen", "127.0.0.1:0"})
		})
		if code != 2 {
			t.Errorf("--http 0.0.0.0:0 without a token: exit %d, want 2", code)
		}
	}
	if _, err := os.Stat(datadir.Dir(data).DB()); !os.IsNotExist(err) {
		t.Errorf("a store was opened before the refusal: %v", err)
	}
}
