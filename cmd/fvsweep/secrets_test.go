package main

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// A secret comes from --NAME-file, --NAME (with a warning), $ENV_FILE or
// $ENV, in that order; a file's first line is the secret.
func TestSecretSources(t *testing.T) {
	dir := t.TempDir()
	file := filepath.Join(dir, "tok")
	if err := os.WriteFile(file, []byte("  from-file \nsecond line\n"), 0o600); err != nil {
		t.Fatal(err)
	}
	empty := filepath.Join(dir, "empty")
	os.WriteFile(empty, []byte("\n"), 0o600)
	for _, c := range []struct {
		args    []string
		env     map[string]string
		want    string
		warn    bool
		wantErr string
	}{
		{nil, map[string]string{"FVSWEEP_T": "from-env"}, "from-env", false, ""},
		{nil, map[string]string{"FVSWEEP_T": "from-env", "FVSWEEP_T_FILE": file}, "from-file", false, ""},
		{[]string{"--t", "from-flag"}, map[string]string{"FVSWEEP_T_FILE": file}, "from-flag", true, ""},
		{[]string{"--t-file", file}, map[string]string{"FVSWEEP_T": "from-env"}, "from-file", false, ""},
		{[]string{"--t", "x", "--t-file", file}, nil, "", true, "not both"},
		{[]string{"--t-file", empty}, nil, "", false, "no secret"},
		{[]string{"--t-file", filepath.Join(dir, "missing")}, nil, "", false, "--t-file"},
	} {
		t.Setenv("FVSWEEP_T", "")
		t.Setenv("FVSWEEP_T_FILE", "")
		for k, v := range c.env {
			t.Setenv(k, v)
		}
		var warn bytes.Buffer
		secretWarnings = &warn
		fs := flag.NewFlagSet("x", flag.ContinueOnError)
		var got string
		registerSecret(fs, &got, "t", "FVSWEEP_T")
		_, err := parseArgs(fs, c.args)
		switch {
		case c.wantErr != "":
			if err == nil || !strings.Contains(err.Error(), c.wantErr) {
				t.Errorf("%v %v: error %v, want one saying %q", c.args, c.env, err, c.wantErr)
			}
		case err != nil || got != c.want:
			t.Errorf("%v %v: %q, %v; want %q", c.args, c.env, got, err, c.want)
		}
		if c.wantErr == "" && (warn.Len() > 0) != c.warn {
			t.Errorf("%v: warning %q, want one: %v", c.args, warn.String(), c.warn)
		}
	}
	secretWarnings = os.Stderr
}
