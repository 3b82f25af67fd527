package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// load sends on the very bytes it checked, and each error names the file
// (and, for a bad key, the line and the key).
func TestSolverFlagsLoad(t *testing.T) {
	src, err := os.ReadFile(filepath.Join("..", "..", "examples", "solvers", "rusanov-py", "manifest.toml"))
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	write := func(name, text string) string {
		t.Helper()
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return path
	}
	good := write("good.toml", string(src))
	twin := write("twin.toml", string(src))
	bad := write("bad.toml", strings.Replace(string(src), `timeout = "10m"`, `timeout = "soon"`, 1))
	big := write("big.toml", string(src)+"#"+strings.Repeat("x", 64<<10)+"\n")

	sv := solverFlags{files: []string{good}}
	progs, texts, err := sv.load()
	if err != nil {
		t.Fatal(err)
	}
	if len(progs) != 1 || progs[0].Name != "rusanov-py" || len(texts) != 1 || texts[0].File != good || texts[0].Source != string(src) {
		t.Errorf("load: %d manifests, texts %+v; want rusanov-py and the file's text", len(progs), texts)
	}

	for _, tc := range []struct {
		files []string
		want  string
	}{
		{[]string{bad}, bad + ":9: timeout: "},
		{[]string{big}, big + ": file is larger than"},
		{[]string{filepath.Join(dir, "none.toml")}, filepath.Join(dir, "none.toml")},
		{[]string{good, twin}, good + " and " + twin + " both name solver rusanov-py"},
	} {
		sv := solverFlags{files: tc.files}
		if _, _, err := sv.load(); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("load %v: got %v, want an error with %q", tc.files, err, tc.want)
		}
	}
}
