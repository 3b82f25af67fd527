package fv2d

import (
	"context"
	"encoding/binary"
	"fmt"
	"hash/fnv"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"strings"
	"testing"
)

// The same job must give the same bits whoever runs it: any thread count,
// any kernel path, any GOAMD64 level (a distributed sweep trusts a result
// whichever worker computed it). bitsRuns are small runs covering the
// kernels: schemes, splittings, reconstructions, limiters and fluxes of
// both laws, with and without a source.
var bitsRuns = []struct {
	name string
	kv   map[string]string
}{
	{"vortex", map[string]string{"nx": "24", "ny": "20", "t_end": "0.5"}},
	{"vortex", map[string]string{"nx": "20", "ny": "20", "t_end": "0.5", "scheme": "godunov", "flux": "rusanov", "split": "lie"}},
	{"vortex", map[string]string{"nx": "20", "ny": "20", "t_end": "0.5", "recon": "conserved", "flux": "roe", "limiter": "mc", "alternate": "true"}},
	{"shocktube", map[string]string{"nx": "64", "ny": "3", "flux": "hll", "limiter": "minmod"}},
	{"shocktube", map[string]string{"nx": "48", "ny": "3", "test": "3", "flux": "exact", "limiter": "superbee", "axis": "y"}},
	{"shocktube", map[string]string{"nx": "48", "ny": "3", "test": "2", "scheme": "godunov", "split": "lie"}},
	{"burgers-diagonal", map[string]string{"nx": "32", "ny": "24", "t_end": "0.05"}},
	{"burgers-diagonal", map[string]string{"nx": "32", "ny": "24", "t_end": "0.05", "scheme": "godunov", "flux": "rusanov", "split": "lie"}},
	{"burgers-riemann", map[string]string{"nx": "40", "ny": "3", "limiter": "superbee"}},
	{"euler-mms", map[string]string{"nx": "16", "ny": "16", "t_end": "0.1"}},
	// columns left over from groups of four, and y sweeps that find the
	// wave speeds (lie), for the SIMD y sweep of four columns at a time
	{"vortex", map[string]string{"nx": "23", "ny": "18", "t_end": "0.5", "split": "lie"}},
	{"vortex", map[string]string{"nx": "22", "ny": "19", "t_end": "0.5", "scheme": "godunov", "alternate": "true"}},
	{"shocktube", map[string]string{"nx": "8", "ny": "64", "test": "2", "axis": "y"}},
	{"shocktube", map[string]string{"nx": "5", "ny": "64", "test": "3", "axis": "y", "split": "lie"}},
	{"quadrants", map[string]string{"nx": "20", "ny": "20"}},
	{"burgers-mms", map[string]string{"nx": "16", "ny": "16", "t_end": "0.1", "limiter": "minmod"}},
}

// stateHash is the FNV-1a hash of the bits of the interior cells of st,
// variable by variable, row by row.
func stateHash(st *State) uint64 {
	h := fnv.New64a()
	var b [8]byte
	for _, q := range st.U {
		for j := 0; j < st.NY; j++ {
			for i := 0; i < st.NX; i++ {
				binary.LittleEndian.PutUint64(b[:], math.Float64bits(q[st.Index(i, j)]))
				h.Write(b[:])
			}
		}
	}
	return h.Sum64()
}

// bitsHashes runs every bitsRuns entry with each thread count and returns
// one line per run: its index, its hash and the kernel that ran it. It
// fails t when the thread counts disagree.
func bitsHashes(t *testing.T, threads ...int) []string {
	var out []string
	for k, r := range bitsRuns {
		var first uint64
		var kernel string
		for n, th := range threads {
			kv := map[string]string{"threads": fmt.Sprint(th)}
			for key, x := range r.kv {
				kv[key] = x
			}
			v, err := Resolve(r.name, kv)
			if err != nil {
				t.Fatal(err)
			}
			res, err := Run(context.Background(), v)
			if err != nil {
				t.Fatalf("%s %v: %v", r.name, kv, err)
			}
			h := stateHash(res.Final)
			if n == 0 {
				first, kernel = h, res.Kernel
			} else if h != first {
				t.Errorf("%s %v: threads=%d gives hash %016x, threads=%d %016x", r.name, r.kv, th, h, threads[0], first)
			}
		}
		out = append(out, fmt.Sprintf("%d %016x %s", k, first, kernel))
	}
	return out
}

// TestSameBitsThreads holds the final states of bitsRuns bitwise equal under
// 1, 2 and 3 threads (3 does not divide the grids evenly).
func TestSameBitsThreads(t *testing.T) {
	lines := bitsHashes(t, 1, 2, 3)
	// FV2D_BITS_OUT names a file for the hashes, to compare them with those
	// of another build (GOAMD64 level, kernel path) by hand:
	//   FV2D_BITS_OUT=/tmp/h1 go test -run TestSameBitsThreads ./fv2d
	if out := os.Getenv("FV2D_BITS_OUT"); out != "" {
		if err := os.WriteFile(out, []byte(strings.Join(lines, "\n")+"\n"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// goamd64 returns the GOAMD64 level this test binary was built for.
func goamd64() string {
	if bi, ok := debug.ReadBuildInfo(); ok {
		for _, s := range bi.Settings {
			if s.Key == "GOAMD64" {
				return s.Value
			}
		}
	}
	return "v1"
}

// TestSameBitsGOAMD64 holds the final states of bitsRuns bitwise equal
// between this build and one for another GOAMD64 level (v3 from v1 or v2,
// else v1), where the compiler may fuse a multiplication and an addition
// into one FMA (one rounding instead of two) unless the code prevents it.
// It rebuilds the package's tests with the other level and runs
// TestSameBitsThreads there.
func TestSameBitsGOAMD64(t *testing.T) {
	if runtime.GOARCH != "amd64" {
		t.Skip("GOAMD64 levels are an amd64 matter")
	}
	if testing.Short() {
		t.Skip("rebuilds the package's tests (-short)")
	}
	goCmd, err := exec.LookPath("go")
	if err != nil {
		t.Skip("no go command to rebuild the tests with:", err)
	}
	level, other := goamd64(), "v3"
	if level == "v3" || level == "v4" {
		other = "v1"
	}
	out := filepath.Join(t.TempDir(), "hashes")
	cmd := exec.Command(goCmd, "test", "-count=1", "-run", "^TestSameBitsThreads$", ".")
	cmd.Env = append(os.Environ(), "GOAMD64="+other, "FV2D_BITS_OUT="+out)
	msg, err := cmd.CombinedOutput()
	if err != nil {
		// The Go runtime refuses to start a binary built for a level the
		// processor lacks, with a message naming the level.
		if strings.Contains(string(msg), "microarchitecture support") {
			t.Skipf("this processor cannot run GOAMD64=%s code: %s", other, msg)
		}
		t.Fatalf("GOAMD64=%s go test: %v\n%s", other, err, msg)
	}
	theirs, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	mine := bitsHashes(t, 1)
	lines := strings.Split(strings.TrimSpace(string(theirs)), "\n")
	if len(lines) != len(mine) {
		t.Fatalf("GOAMD64=%s wrote %d hashes, want %d", other, len(lines), len(mine))
	}
	// Compare the run index and the hash; the kernel path may differ.
	for k := range mine {
		a, b := strings.Fields(mine[k]), strings.Fields(lines[k])
		if len(b) < 2 || a[0] != b[0] || a[1] != b[1] {
			t.Errorf("%s %v: GOAMD64=%s gives %q, GOAMD64=%s %q", bitsRuns[k].name, bitsRuns[k].kv, level, mine[k], other, lines[k])
		}
	}
}

// simdWidths are the HLLC widths this processor can check: four faces
// at a time, and eight where it has AVX-512 (hllcWide).
func simdWidths() []bool {
	if hllcWide {
		return []bool{false, true}
	}
	return []bool{false}
}

// TestSameBitsSIMD holds the SIMD path (HLLC four and, with AVX-512, eight
// faces at a time) bitwise equal to the portable one: the final states of
// bitsRuns and the fluxes of random faces, subsonic and supersonic, on both
// sides of the contact.
func TestSameBitsSIMD(t *testing.T) {
	if !simdHLLC {
		t.Skip("no SIMD path in this build or on this processor (GOEXPERIMENT=simd and AVX2 needed)")
	}
	defer func(old, wide bool) { useSIMD, hllcWide = old, wide }(useSIMD, hllcWide)
	widths := simdWidths()
	useSIMD = false
	portable := bitsHashes(t, 1)
	useSIMD = true
	for _, wide := range widths {
		hllcWide = wide
		simd := bitsHashes(t, 1)
		used := 0
		for k := range simd {
			a, b := strings.Fields(simd[k]), strings.Fields(portable[k])
			if a[1] != b[1] {
				t.Errorf("%s %v: SIMD path (%s) %s, portable %s", bitsRuns[k].name, bitsRuns[k].kv, a[2], a[1], b[1])
			}
			if a[2] != "portable" {
				used++
			}
		}
		if used == 0 {
			t.Error("no run took the SIMD path")
		}
	}

	// Random faces: densities and pressures over six decades, velocities
	// up to Mach 4 either way, so that every branch of hllc is taken.
	const n = 4103 // eight faces at a time to 4096, then four to 4100
	var r, l, f [4][]float64
	for k := range 4 {
		r[k], l[k], f[k] = make([]float64, n), make([]float64, n+1), make([]float64, n)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	state := func(s *[4][]float64, i int) {
		rho, p := math.Pow(10, 6*rng.Float64()-3), math.Pow(10, 6*rng.Float64()-3)
		a := math.Sqrt(1.4 * p / rho)
		s[0][i], s[1][i], s[2][i], s[3][i] = rho, a*(8*rng.Float64()-4), a*(2*rng.Float64()-1), p
	}
	for i := range n {
		state(&r, i)
		state(&l, i+1)
	}
	gamma := 1.4
	g := gamma / (gamma - 1)
	for _, wide := range widths {
		hllcWide = wide
		done := hllcFaces4(gamma, g, r[0], r[1], r[2], r[3], l[0][1:], l[1][1:], l[2][1:], l[3][1:], f[0], f[1], f[2], f[3])
		if done != n&^3 {
			t.Fatalf("hllcFaces4 did %d faces of %d", done, n)
		}
		for i := range done {
			w0, w1, w2, w3 := hllc(gamma, g, r[0][i], r[1][i], r[2][i], r[3][i], l[0][i+1], l[1][i+1], l[2][i+1], l[3][i+1])
			want := [4]float64{w0, w1, w2, w3}
			for k := range 4 {
				if math.Float64bits(f[k][i]) != math.Float64bits(want[k]) {
					t.Fatalf("eight at a time %v: face %d, flux %d: SIMD %v, portable %v", wide, i, k, f[k][i], want[k])
				}
			}
		}
	}
}

// TestSameBitsKernels holds the Euler kernels bitwise equal to the
// portable line kernels on rough data, where the bitsRuns are smooth: cells
// of random states (densities and pressures over six decades, up to Mach 4
// either way), so that the first-order fallback of the half step and every
// branch of HLLC are taken. It checks the four-column kernels of the y
// sweep (in place, portable and, where the build and processor have them,
// SIMD passes) against each column's line, and the SIMD line kernels (x
// sweep) against the portable ones, for MUSCL-Hancock and Godunov, with
// and without the wave speeds.
func TestSameBitsKernels(t *testing.T) {
	paths := []bool{false} // sp.simd of the kernels under test
	if simdHLLC {
		paths = append(paths, true)
	}
	const m, stride, c0 = 45, 7, 2 // cells per line; columns c0..c0+3 of rows stride apart
	rng := rand.New(rand.NewPCG(3, 4))
	gamma := 1.4
	fill := func(q *[4][]float64) {
		for i := range q[0] {
			rho, p := math.Pow(10, 6*rng.Float64()-3), math.Pow(10, 6*rng.Float64()-3)
			a := math.Sqrt(gamma * p / rho)
			u, v := a*(8*rng.Float64()-4), a*(8*rng.Float64()-4)
			q[0][i], q[1][i], q[2][i] = rho, rho*u, rho*v
			q[3][i] = p/(gamma-1) + 0.5*rho*(u*u+v*v)
		}
	}
	same := func(what string, a, b float64) {
		t.Helper()
		if math.Float64bits(a) != math.Float64bits(b) {
			t.Fatalf("%s: %v, portable line kernel %v", what, a, b)
		}
	}
	kernels := []struct {
		name string
		line lineKernel
		cols colsKernel
	}{{"muscl", eulerMUSCLPrim, eulerMUSCLPrimCols}, {"godunov", eulerGodunov, eulerGodunovCols}}
	widths := simdWidths()
	defer func(wide bool) { hllcWide = wide }(hllcWide)
	for trial := range 160 {
		hllcWide = widths[trial%len(widths)] // HLLC eight faces at a time or four
		k := kernels[trial/80]
		simd := paths[trial/4%len(paths)]
		sp := sweepParams{dtdx: 0.02 * rng.Float64(), gamma: gamma, speed: trial/2%2 == 1, ef: EulerHLLC, lim: VanLeer,
			vanLeer: true, hllc: true, scr: newLineScratch(4 * m)}
		var line, ref [4][]float64
		for v := range 4 {
			line[v], ref[v] = make([]float64, m), make([]float64, m)
		}
		// x: one line, the SIMD passes against the portable ones
		if simd {
			fill(&line)
			for v := range 4 {
				copy(ref[v], line[v])
			}
			sp.simd = false
			wantx := k.line(&sp, ref[0], ref[1], ref[2], ref[3])
			sp.simd = simd
			got := k.line(&sp, line[0], line[1], line[2], line[3])
			for v := range 4 {
				for i := range m {
					same(fmt.Sprintf("%s x, trial %d, simd %v, var %d, cell %d", k.name, trial, simd, v, i), line[v][i], ref[v][i])
				}
			}
			if got.bad != wantx.bad || !wantx.bad && (got.sn != wantx.sn || got.st != wantx.st) {
				t.Fatalf("%s x, trial %d, simd %v: reports %+v, portable %+v", k.name, trial, simd, got, wantx)
			}
		}
		// y: four columns in place, each against its own line
		var grid, want [4][]float64
		for v := range 4 {
			grid[v], want[v] = make([]float64, m*stride), make([]float64, m*stride)
		}
		fill(&grid)
		for v := range 4 {
			copy(want[v], grid[v])
		}
		sp.simd = false
		wanty := lineResult{}
		for c := c0; c < c0+4; c++ {
			for v := range 4 {
				for i := range m {
					ref[v][i] = want[v][i*stride+c]
				}
			}
			r := k.line(&sp, ref[0], ref[1], ref[2], ref[3])
			if !r.bad {
				wanty.sn, wanty.st = max(wanty.sn, r.sn), max(wanty.st, r.st)
			}
			wanty.bad = wanty.bad || r.bad
			for v := range 4 {
				for i := range m {
					want[v][i*stride+c] = ref[v][i]
				}
			}
		}
		sp.simd = simd
		got := k.cols(&sp, grid[0][c0:], grid[1][c0:], grid[2][c0:], grid[3][c0:], stride, m)
		for v := range 4 {
			for i := range grid[v] {
				same(fmt.Sprintf("%s y, trial %d, simd %v, var %d, element %d", k.name, trial, simd, v, i), grid[v][i], want[v][i])
			}
		}
		if got.bad != wanty.bad || !wanty.bad && (got.sn != wanty.sn || got.st != wanty.st) {
			t.Fatalf("%s y, trial %d, simd %v: reports %+v, portable %+v", k.name, trial, simd, got, wanty)
		}
	}
}
