package fv2d

import (
	"fmt"
	"math"
	"strings"
	"sync"
)

// Cost is an estimate of the work and memory of one run, made without
// running it.
type Cost struct {
	Cells int     // nx * ny
	Steps float64 // estimated time steps
	Bytes int64   // estimated solver memory
}

// Work is Cells * Steps: the estimated number of cell updates.
func (c Cost) Work() float64 { return float64(c.Cells) * c.Steps }

// estimateSamples is the most sample points per direction Estimate uses.
const estimateSamples = 64

// Estimate returns the cost of the run v without running it, using
// DefaultEstimator: see Estimator.Estimate.
func Estimate(v Values) Cost { return DefaultEstimator.Estimate(v) }

// Estimator estimates the cost of runs, setting up and sampling each
// distinct problem once: runs that differ only in grid or scheme settings
// (the usual sweep) share one sampling. Its zero value is ready to use; it is
// safe for concurrent use. It keeps at most 4096 sampled problems.
type Estimator struct {
	mu    sync.Mutex
	cache map[string]speeds // by speedKey
}

// DefaultEstimator is the Estimator of Estimate, shared by every caller of
// Estimate in the process (as http.DefaultClient is): sweep expansion calls
// Estimate once per run, and this cache makes that one sampling per problem.
// A caller that wants its own cache holds an Estimator of its own.
var DefaultEstimator = &Estimator{}

// Estimate returns the cost of the run v without running it. It sets up the
// case's problem, samples the initial state (and, where the case has one,
// the exact solution at t_end) at up to 64 x 64 points to find the largest
// wave speeds smax_x = max(|u|+a), smax_y = max(|v|+a) (Burgers: |u|), and
// counts steps = ceil(t_end / dt) with the CFL step
// dt = cfl / max(smax_x/dx, smax_y/dy) of the solver. Without an exact
// solution the initial speeds are a guess: shocks and fans change them as
// the run goes (by tens of percent in a 2-D Riemann problem). Bytes counts the state (with ghost
// layers), the y-sweep scratch of every thread and, when the case has an
// exact solution, the exact cell averages. A run that cannot be set up
// costs its cell count and zero steps.
func (e *Estimator) Estimate(v Values) Cost {
	cfg, err := ConfigFrom(v)
	if err != nil { // not a run of a registered case: nothing to sample
		return Cost{Cells: v.Int("nx") * v.Int("ny")}
	}
	nx, ny := cfg.NX, cfg.NY
	cost := Cost{Cells: nx * ny}
	mx, my := min(nx, estimateSamples), min(ny, estimateSamples)
	w, ok := e.waveSpeeds(v, mx, my)
	if !ok {
		return cost
	}
	g := 1
	if cfg.Scheme == SchemeMUSCL {
		g = 2
	}
	state := int64(w.nv) * int64(nx+2*g) * int64(ny+2*g) * 8
	cost.Bytes = state + int64(cfg.Threads)*int64(w.nv)*blockCols*int64(ny+2*g)*8
	if w.exact {
		cost.Bytes += state
	}
	tEnd := cfg.TEnd
	if w.tEnd > 0 {
		tEnd = w.tEnd
	}
	dx, dy := w.lx/float64(nx), w.ly/float64(ny)
	rate := math.Max(w.sx/dx, w.sy/dy) / cfg.CFL // 1/dt
	if tEnd > 0 {
		cost.Steps = math.Max(1, math.Ceil(tEnd*rate))
	}
	return cost
}

// speeds is what Estimate needs of a problem: it depends on the case's
// physical parameters and the sample grid, not on the grid or the scheme.
type speeds struct {
	sx, sy, tEnd, lx, ly float64
	nv                   int
	exact                bool
}

// solverOnly are the parameters that cannot change a case's problem.
var solverOnly = map[string]bool{"nx": true, "ny": true, "threads": true, "max_steps": true, "cfl": true,
	"scheme": true, "limiter": true, "flux": true, "split": true, "alternate": true, "recon": true, "quad": true}

// speedCacheSize is the most problems an Estimator keeps; a full cache is
// emptied.
const speedCacheSize = 4096

// waveSpeeds returns the sampled wave speeds of the problem of v, set up and
// sampled once per physical configuration: expanding a sweep of 100,000 runs
// then costs one sampling per distinct problem, not per run.
func (e *Estimator) waveSpeeds(v Values, mx, my int) (speeds, bool) {
	var b strings.Builder
	fmt.Fprintf(&b, "%s %d %d", v.Case, mx, my)
	for _, k := range v.Keys() {
		if !solverOnly[k] {
			fmt.Fprintf(&b, " %s=%s", k, v.Get(k))
		}
	}
	key := b.String()
	e.mu.Lock()
	w, ok := e.cache[key]
	e.mu.Unlock()
	if ok {
		return w, true
	}
	w, ok = sampleProblem(v, mx, my)
	if !ok {
		return speeds{}, false
	}
	e.mu.Lock()
	if e.cache == nil || len(e.cache) >= speedCacheSize {
		e.cache = make(map[string]speeds)
	}
	e.cache[key] = w
	e.mu.Unlock()
	return w, true
}

// sampleProblem sets up the problem of v and samples its wave speeds on an
// mx x my grid.
func sampleProblem(v Values, mx, my int) (speeds, bool) {
	c, err := LookupCase(v.Case)
	if err != nil {
		return speeds{}, false
	}
	p, err := c.Setup(v)
	if err != nil || p.Initial == nil {
		return speeds{}, false
	}
	w := speeds{tEnd: p.TEnd, lx: p.X1 - p.X0, ly: p.Y1 - p.Y0, nv: len(p.Eq.Vars()), exact: p.Exact != nil}
	tEnd := v.Float("t_end")
	if p.TEnd > 0 {
		tEnd = p.TEnd
	}
	w.sx, w.sy = sampleSpeeds(p, p.Initial, mx, my)
	if p.Exact != nil && tEnd > 0 { // waves that the initial data do not show yet (shock tubes)
		ex, ey := sampleSpeeds(p, func(x, y float64, s []float64) { p.Exact(x, y, tEnd, s) }, mx, my)
		w.sx, w.sy = math.Max(w.sx, ex), math.Max(w.sy, ey)
	}
	return w, true
}

// sampleSpeeds returns the largest wave speeds in x and y of the primitive
// field f on the domain of p, sampled at the centres of an mx x my grid.
func sampleSpeeds(p *Problem, f func(x, y float64, w []float64), mx, my int) (sx, sy float64) {
	w := make([]float64, len(p.Eq.PrimVars()))
	for j := 0; j < my; j++ {
		y := p.Y0 + (float64(j)+0.5)*(p.Y1-p.Y0)/float64(my)
		for i := 0; i < mx; i++ {
			x := p.X0 + (float64(i)+0.5)*(p.X1-p.X0)/float64(mx)
			f(x, y, w)
			if p.Eq == Burgers {
				sx = math.Max(sx, math.Abs(w[0]))
				continue
			}
			a := math.Sqrt(p.Gamma * w[3] / w[0])
			sx = math.Max(sx, math.Abs(w[1])+a)
			sy = math.Max(sy, math.Abs(w[2])+a)
		}
	}
	if p.Eq == Burgers {
		sy = sx
	}
	return sx, sy
}
