package spec

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"fvsweep/sweep/manifest"
)

const goodManifest = `name = "heron"
version = "0.4.1"
equation = "euler"
command = ["./heron", "--grid", "{nx}x{ny}", "--limiter", "{limiter}",
           "--cfl", "{cfl}", "--until", "{t_end}", "--from", "{input}", "--to", "{output}"]
input = "csv"
output = "npy"
variables = ["rho", "mx", "my", "E"]
timeout = "15m"
memory = "4GiB"
[params]
limiter = { choices = ["minmod", "vanleer"], default = "vanleer" }
cfl = { kind = "float", min = 0.0, max = 1, default = 0.8, doc = "Courant number" }
`

func TestLoadManifest(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "heron.toml")
	if err := os.WriteFile(path, []byte(goodManifest), 0o644); err != nil {
		t.Fatal(err)
	}
	m, err := LoadManifest(path)
	if err != nil {
		t.Fatal(err)
	}
	if m.Name != "heron" || m.Version != "0.4.1" || m.Equation != manifest.Euler || m.Input != manifest.CSV || m.Output != manifest.NPY {
		t.Errorf("%+v", m)
	}
	if m.Command[0] != filepath.Join(dir, "heron") || m.Dir != dir {
		t.Errorf("program %s dir %s, want both in %s", m.Command[0], m.Dir, dir)
	}
	if m.Timeout != 15*time.Minute || m.Memory != 4<<30 {
		t.Errorf("timeout %v memory %d", m.Timeout, m.Memory)
	}
	if len(m.Params) != 2 || m.Params[0].Name != "limiter" || m.Params[0].Kind != manifest.Choice ||
		m.Params[1].Name != "cfl" || m.Params[1].Max != 1 || m.Params[1].Default != "0.8" || m.Params[1].Doc != "Courant number" {
		t.Errorf("params %+v", m.Params)
	}
	if m2, src, err := ReadManifest(path); err != nil || string(src) != goodManifest || m2.Command[0] != m.Command[0] {
		t.Errorf("ReadManifest: %v, %d bytes, want the file's %d", err, len(src), len(goodManifest))
	}
	bare := strings.Replace(goodManifest, `"./heron"`, `"heron"`, 1)
	if m, err := ParseManifest("x.toml", []byte(bare)); err != nil || m.Command[0] != "heron" {
		t.Errorf("bare program name: %v %v", m, err)
	}
}

// Each error names the file, the line and the key.
func TestManifestErrors(t *testing.T) {
	for _, tc := range []struct{ old, new, want string }{
		{`version = "0.4.1"`, `version = 4`, "m.toml:2: version: want a string, got the integer 4"},
		{`version = "0.4.1"`, ``, "m.toml: missing key version"},
		{`equation = "euler"`, `equation = "maxwell"`, `m.toml:3: equation: "maxwell": want euler or burgers`},
		{`input = "csv"`, "input = \"csv\"\ncolour = 1", "m.toml:7: colour: unknown key"},
		{`timeout = "15m"`, `timeout = "soon"`, `m.toml:9: timeout: "soon": want a duration`},
		{`memory = "4GiB"`, `memory = "lots"`, `m.toml:10: memory: size "lots"`},
		{`"--cfl", "{cfl}"`, `"--cfl", "{cfl"`, `m.toml:5: command.6: "{cfl": '{' at byte 0 is not closed`},
		{`max = 1,`, `max = "1",`, `m.toml:13: params.cfl.max: want a number, got the string "1"`},
		{`default = 0.8,`, `default = 1.8,`, `m.toml:13: params.cfl.default: parameter cfl: 1.8 is above its maximum 1`},
		{`doc = "Courant number"`, `colour = "red"`, `m.toml:13: params.cfl.colour: unknown key`},
		{`limiter = { choices`, "nx = { kind = \"int\", default = 4 }\nlimiter = { choices", `m.toml:12: params.nx: a name fvsweep sets`},
		{goodManifest[strings.Index(goodManifest, "[params]"):], "params = 3\n", `m.toml:11: params: want a table`},
		{`name = "heron"`, `name = "heron`, `m.toml:1: malformed TOML`},
	} {
		src := strings.Replace(goodManifest, tc.old, tc.new, 1)
		_, err := ParseManifest("m.toml", []byte(src))
		var me *manifest.Error
		if !errors.As(err, &me) || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s -> %s:\n got %v\nwant %s", tc.old, tc.new, err, tc.want)
		}
	}
}
