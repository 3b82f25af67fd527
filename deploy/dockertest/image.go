package dockertest

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"testing"

	"fvsweep/deploy"
)

// BinaryPath is where the fvsweep binary lives inside the image.
const BinaryPath = "/fvsweep"

// ModuleRoot is the directory of the go.mod of the module under test.
func ModuleRoot() (string, error) {
	out, err := exec.Command("go", "env", "GOMOD").Output()
	if err != nil {
		return "", fmt.Errorf("go env GOMOD: %w", err)
	}
	mod := strings.TrimSpace(string(out))
	if mod == "" || mod == os.DevNull {
		return "", fmt.Errorf("not inside a Go module")
	}
	return filepath.Dir(mod), nil
}

// BuildBinary builds ./cmd/fvsweep of the module as a static binary
// (CGO_ENABLED=0) for goos (and this machine's architecture) into dir and
// returns its path. The go build cache makes a second build of unchanged
// sources take a moment.
func BuildBinary(dir, goos string) (string, error) {
	root, err := ModuleRoot()
	if err != nil {
		return "", err
	}
	out := filepath.Join(dir, "fvsweep")
	cmd := exec.Command("go", "build", "-trimpath", "-buildvcs=false", "-o", out, "./cmd/fvsweep")
	cmd.Dir = root
	cmd.Env = append(os.Environ(), "CGO_ENABLED=0", "GOOS="+goos)
	if b, err := cmd.CombinedOutput(); err != nil {
		return "", fmt.Errorf("building fvsweep: %w\n%s", err, b)
	}
	return out, nil
}

// Image is an image built FROM scratch: the fvsweep binary at BinaryPath
// and the extra files copied in.
type Image struct {
	Tag string
}

var (
	imageMu    sync.Mutex
	imageCache = map[string]*Image{}
	binDir     string // the binary of this test process, built once
	binPath    string
)

// binary builds the fvsweep binary the first time a test asks for it.
func binary() (string, error) {
	if binPath != "" {
		return binPath, nil
	}
	dir, err := os.MkdirTemp("", "fvsweep-dockertest-")
	if err != nil {
		return "", err
	}
	p, err := BuildBinary(dir, "linux")
	if err != nil {
		os.RemoveAll(dir)
		return "", err
	}
	binDir, binPath = dir, p
	return p, nil
}

// Main runs the tests of a package that uses the harness and removes the
// binary it built; call it from TestMain: os.Exit(dockertest.Main(m)).
func Main(m *testing.M) int {
	code := m.Run()
	imageMu.Lock()
	defer imageMu.Unlock()
	if binDir != "" {
		os.RemoveAll(binDir)
	}
	return code
}

// BuildImage builds (or finds, by content hash) an image holding the
// fvsweep binary of this module and files: image path -> host path. The
// image is kept between runs; images of this package with other contents
// are removed, so at most one is left behind.
func (e *Engine) BuildImage(t testing.TB, files map[string]string) *Image {
	t.Helper()
	imageMu.Lock()
	defer imageMu.Unlock()
	ctxDir := t.TempDir()
	built, err := binary()
	if err != nil {
		t.Fatal(err)
	}
	bin := filepath.Join(ctxDir, "fvsweep")
	if err := copyFile(bin, built, 0o755); err != nil {
		t.Fatal(err)
	}
	h := sha256.New()
	dockerfile := "FROM scratch\nCOPY fvsweep " + BinaryPath + "\n"
	if err := hashFile(h, bin); err != nil {
		t.Fatal(err)
	}
	dests := make([]string, 0, len(files))
	for d := range files {
		dests = append(dests, d)
	}
	sort.Strings(dests)
	for i, d := range dests {
		name := fmt.Sprintf("file%d", i)
		if err := copyFile(filepath.Join(ctxDir, name), files[d], 0o644); err != nil {
			t.Fatal(err)
		}
		fmt.Fprintf(h, "%s\x00", d)
		if err := hashFile(h, files[d]); err != nil {
			t.Fatal(err)
		}
		dockerfile += "COPY " + name + " " + d + "\n"
	}
	dockerfile += "ENTRYPOINT [\"" + BinaryPath + "\"]\n"
	h.Write([]byte(dockerfile))
	tag := "fvsweep-dockertest:" + hex.EncodeToString(h.Sum(nil))[:16]
	if img := imageCache[tag]; img != nil {
		return img
	}
	if _, err := e.run(bg(), "image", "inspect", "--format", "{{.Id}}", tag); err != nil {
		if err := os.WriteFile(filepath.Join(ctxDir, "Dockerfile"), []byte(dockerfile), 0o644); err != nil {
			t.Fatal(err)
		}
		e.Docker(t, "build", "--quiet", "--label", label, "--tag", tag, ctxDir)
		e.pruneImages(t, tag)
	}
	img := &Image{Tag: tag}
	imageCache[tag] = img
	return img
}

// ConfigDir is where the deploy/nats files lie in the Fvsweep image.
const ConfigDir = "/etc/fvsweep/nats"

// Fvsweep builds (or finds) the image all tests share: the fvsweep binary
// and the node configurations of deploy/nats under ConfigDir, as shipped.
// One image for every test keeps the cache warm: each build of another
// content removes the previous one.
func (e *Engine) Fvsweep(t testing.TB) *Image {
	t.Helper()
	files := map[string]string{}
	for _, f := range []string{"node-1.conf", "node-2.conf", "node-3.conf", "common.conf"} {
		files[ConfigDir+"/"+f] = filepath.Join(deploy.NATSDir(), f)
	}
	return e.BuildImage(t, files)
}

// pruneImages removes this package's images other than keep.
func (e *Engine) pruneImages(t testing.TB, keep string) {
	out, err := e.run(bg(), "image", "ls", "--filter", "label="+label, "--format", "{{.Repository}}:{{.Tag}}")
	if err != nil {
		t.Logf("listing old images: %v", err)
		return
	}
	for _, tag := range strings.Fields(out) {
		if tag != keep && strings.HasPrefix(tag, "fvsweep-dockertest:") {
			e.quiet(t, "image", "rm", tag)
		}
	}
}

func hashFile(w io.Writer, path string) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	_, err = io.Copy(w, f)
	return err
}

func copyFile(dst, src string, mode os.FileMode) error {
	b, err := os.ReadFile(src)
	if err != nil {
		return err
	}
	return os.WriteFile(dst, b, mode)
}
