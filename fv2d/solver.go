package fv2d

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"sync"
	"sync/atomic"
	"time"
)

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// Splitting. One time step of size dt is, with X and Y the 1-D sweeps:
//   strang: X(dt/2) Y(dt) X(dt/2)   (second order in time, Strang 1968)
//   lie:    X(dt) Y(dt)             (first order)
// and with alternate=true the roles of X and Y swap on every other step.
// The time step comes from the CFL condition of the full-dt sweeps,
//   dt = cfl / max(max(|u|+a)/dx, max(|v|+a)/dy),
// recomputed every step from the wave speeds of the current state; under
// strang the half-step sweeps therefore run at half the Courant number of
// the full one. This is why a strang shock tube along y (one full y sweep
// per step) differs slightly from the same tube along x (two half x sweeps),
// while under lie the two are transposes of each other to round-off.
//
// A source S(x, y, t) (U_t + F_x + G_y = S) is split in the same symmetric
// way: S(dt/2) H(dt) S(dt/2), where H is the split hyperbolic step and each
// source half step adds (dt/2) S(x_c, y_c, t_m), the source at the cell
// centre and the midpoint of its half step. The source does not depend on U,
// so each half step is the midpoint rule of an exact integral; the whole
// step stays second order.

// A sweep is shared out in chunks: blocks of rowChunk rows (x) or
// blockCols columns (y). Each worker has an equal run of adjacent chunks,
// which it takes from the front; once its own are done it takes chunks of
// the others from the back. A worker that runs slower (on a processor
// shared with other work) then does fewer chunks instead of holding up the
// sweep: with fixed shares, one slow core set the pace of both on the
// two-core virtual machine of docs/speed.md. (Handing out chunks in turn
// from one counter was about half as fast: neighbouring chunks on two
// cores share the cache lines at their edges in every row.) Each line is
// computed alike whoever takes it, so the results do not depend on the
// sharing.
const (
	rowChunk  = 8
	blockCols = 8 // also the number of columns a y sweep gathers at once
)

// Solver advances one run. Build it with NewSolver, advance it with Step
// (or let Run do the whole run), and Close it to stop its goroutines.
type Solver struct {
	prob *Problem
	st   *State

	cfg               Config
	nx, ny, g, stride int
	kern              lineKernel
	kern4             colsKernel // the y sweep's kernel for four columns at a time in place, or nil
	base              sweepParams
	tEnd              float64 // the problem's final time, else cfg.TEnd

	workers []*worker
	job     job            // the job of the current dispatch, set before gen advances
	gen     atomic.Int64   // dispatches so far: workers[1:] run s.job when it advances
	pending atomic.Int64   // workers[1:] still running the current job
	done    parker         // worker 0 waits here for pending to reach 0
	spin    bool           // waiters may spin (no more workers than GOMAXPROCS)
	exited  sync.WaitGroup // the goroutines of workers[1:], until Close
	cpu     time.Duration  // CPU time of the closed workers' threads (see Close)
	cpuOK   bool           // every closed worker read its thread's CPU clock

	sx, sy float64 // largest |u|+a and |v|+a (Burgers: |u|) of the current state
	t      float64
	steps  int

	xc, yc []float64 // cell centres, for the source

	yFirst bool // test hook: start every step with the y sweep
}

type jobKind int

const (
	jobSweepX jobKind = iota
	jobSweepY
	jobSource // add dt * S(x_c, y_c, t) and check the cells; speeds if sp.speed
	jobSpeeds // check the cells and find the wave-speed maxima
	jobQuit   // end the worker's goroutine (Close)
)

type job struct {
	kind  jobKind
	sp    sweepParams
	t, dt float64
}

// worker runs its share of every job: the chunks of a sweep it takes, and
// rows [j0, j1) of source and speed passes. Its scratch holds blockCols
// columns of a y sweep.
type worker struct {
	s      *Solver
	id     int
	j0, j1 int
	chunks span        // its run of the current sweep's chunks
	wake   parker      // workers[1:] wait here for the next dispatch
	sp     sweepParams // of the current sweep (a field, so kernels' pointer to it does not escape per call)
	scr    *lineScratch
	yb     [4][]float64
	src    []float64
	sx, sy float64
	bad    bool
	cpu    time.Duration // CPU time of its thread, set when serve ends
	cpuOK  bool
	_      [64]byte // keep neighbouring workers' results off one cache line
}

// NewSolver sets up the run v: the case's problem, the grid, the initial
// cell averages (Gauss-Legendre of order quad), the scheme and the workers.
// The initial state must be physical (positive density and pressure).
func NewSolver(v Values) (*Solver, error) {
	p, err := SetUp(v)
	if err != nil {
		return nil, err
	}
	cfg, err := configFor(v, p.Eq)
	if err != nil {
		return nil, err
	}
	s := &Solver{prob: p, cfg: cfg, nx: cfg.NX, ny: cfg.NY, tEnd: cfg.TEnd}
	if p.TEnd > 0 {
		s.tEnd = p.TEnd
	}
	muscl := cfg.Scheme == SchemeMUSCL
	s.g = 1
	if muscl {
		s.g = 2
		s.base.lim = cfg.Limiter
	}
	s.base.gamma = p.Gamma
	s.base.vanLeer = cfg.LimiterName == "vanleer"
	s.base.godunovB = p.Eq == Burgers && cfg.FluxName == "exact"
	s.base.hllc = p.Eq == Euler && cfg.FluxName == "hllc"
	s.base.simd = useSIMD && (s.base.hllc || muscl && s.base.vanLeer)
	if p.Eq == Euler {
		if !(p.Gamma > 1) {
			return nil, fmt.Errorf("case %s: gamma = %g, want > 1", v.Case, p.Gamma)
		}
		s.base.ef = cfg.EulerFlux
		switch {
		case !muscl:
			s.kern = eulerGodunov
			if s.base.hllc {
				s.kern4 = eulerGodunovCols
			}
		case cfg.Recon == ReconConserved:
			s.kern = eulerMUSCLCons
		default:
			s.kern = eulerMUSCLPrim
			if s.base.hllc && s.base.vanLeer {
				s.kern4 = eulerMUSCLPrimCols
			}
		}
	} else {
		s.base.bf = cfg.BurgersFlux
		s.kern = burgersGodunov
		if muscl {
			s.kern = burgersMUSCL
		}
	}
	s.st = newState(p, s.nx, s.ny, s.g)
	s.stride = s.st.Stride()
	cellAverages(s.st, newCellRule(cfg.Quad, s.st.DX, s.st.DY), cfg.Threads, p.Initial)
	if p.Source != nil {
		s.xc, s.yc = make([]float64, s.nx), make([]float64, s.ny)
		for i := range s.xc {
			s.xc[i], _ = s.st.Center(i, 0)
		}
		for j := range s.yc {
			_, s.yc[j] = s.st.Center(0, j)
		}
	}
	s.startWorkers(cfg.Threads)
	if bad := s.dispatch(job{kind: jobSpeeds}); bad {
		s.Close()
		return nil, s.failure()
	}
	return s, nil
}

func (s *Solver) startWorkers(threads int) {
	nv := len(s.st.U)
	line := max(s.nx, s.ny) + 2*s.g
	if s.kern4 != nil {
		line = 4 * line // four columns, a row's four cells side by side
	}
	s.workers = make([]*worker, threads)
	s.spin = threads <= runtime.GOMAXPROCS(0)
	s.done.wake = make(chan struct{}, 1)
	for w := range s.workers {
		wk := &worker{
			s: s, id: w,
			j0: w * s.ny / threads, j1: (w + 1) * s.ny / threads,
			src: make([]float64, nv),
			scr: newLineScratch(line),
		}
		for k := 0; k < nv; k++ {
			wk.yb[k] = make([]float64, blockCols*(s.ny+2*s.g))
		}
		s.workers[w] = wk
		if w > 0 {
			wk.wake.wake = make(chan struct{}, 1)
			s.exited.Add(1)
			go wk.serve()
		}
	}
}

// serve runs the jobs of a worker other than worker 0 until jobQuit,
// locked to one OS thread so that the thread's CPU clock measures its work
// alone; it records that CPU time in w.cpu.
func (w *worker) serve() {
	s := w.s
	defer s.exited.Done()
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	c0, ok0 := threadCPU()
	var busy time.Duration // of the last job
	for n := int64(1); ; n++ {
		w.wake.await(&s.gen, n, s.spinFor(busy))
		j := s.job
		if j.kind != jobQuit {
			t0 := time.Now()
			w.do(j)
			busy = time.Since(t0)
		}
		if s.pending.Add(-1) == 0 {
			s.done.wakeUp()
		}
		if j.kind == jobQuit {
			break
		}
	}
	c1, ok1 := threadCPU()
	w.cpu, w.cpuOK = c1-c0, ok0 && ok1
}

// Close stops the solver's goroutines and waits for them to end. The
// state stays valid.
func (s *Solver) Close() {
	if len(s.workers) <= 1 {
		return
	}
	s.dispatch(job{kind: jobQuit})
	s.exited.Wait()
	s.cpuOK = true
	for _, w := range s.workers[1:] {
		s.cpu += w.cpu
		s.cpuOK = s.cpuOK && w.cpuOK
	}
	s.workers = s.workers[:1]
}

// State returns the current solution (owned by the solver; it changes on
// every Step).
func (s *Solver) State() *State { return s.st }

// Problem returns the problem the case set up.
func (s *Solver) Problem() *Problem { return s.prob }

// Time is the current time; Steps the number of steps taken.
func (s *Solver) Time() float64 { return s.t }
func (s *Solver) Steps() int    { return s.steps }

// TEnd is the final time of the run.
func (s *Solver) TEnd() float64 { return s.tEnd }

// MaxDt is the largest step the CFL condition allows for the current state:
// cfl / max(smax_x/dx, smax_y/dy); +Inf when nothing moves.
func (s *Solver) MaxDt() float64 {
	r := math.Max(s.sx/s.st.DX, s.sy/s.st.DY)
	if r == 0 {
		return math.Inf(1)
	}
	return s.cfg.CFL / r
}

// Step advances the state by one split step of size dt (the caller keeps dt
// within MaxDt). It returns a *Failure naming the cell when the state stops
// being physical.
func (s *Solver) Step(dt float64) error {
	a, b := jobSweepX, jobSweepY
	if (s.cfg.Alternate && s.steps%2 == 1) != s.yFirst {
		a, b = b, a
	}
	src := s.prob.Source != nil
	if src {
		if s.dispatch(job{kind: jobSource, t: s.t + float64(0.25*dt), dt: 0.5 * dt}) {
			return s.failure()
		}
	}
	var ok bool
	if s.cfg.Split == SplitStrang {
		ok = s.sweep(a, 0.5*dt, false) && s.sweep(b, dt, false) && s.sweep(a, 0.5*dt, !src)
	} else {
		ok = s.sweep(a, dt, false) && s.sweep(b, dt, !src)
	}
	if ok && src {
		sp := s.base
		sp.speed = true
		ok = !s.dispatch(job{kind: jobSource, sp: sp, t: s.t + float64(0.75*dt), dt: 0.5 * dt})
	}
	if !ok {
		return s.failure()
	}
	s.t += dt
	s.steps++
	s.st.T = s.t
	return nil
}

// sweep runs one 1-D sweep of size dt in direction kind; with speed it
// also refreshes the wave-speed maxima. It reports false on a non-physical
// cell.
func (s *Solver) sweep(kind jobKind, dt float64, speed bool) bool {
	sp := s.base
	sp.speed = speed
	sp.dtdx = dt / s.st.DX
	if kind == jobSweepY {
		sp.dtdx = dt / s.st.DY
	}
	return !s.dispatch(job{kind: kind, sp: sp})
}

// dispatch runs j on every worker (worker 0 on the calling goroutine),
// waits, and combines the results: it reports whether any cell is bad, and
// for jobs that measure them it stores the wave-speed maxima.
func (s *Solver) dispatch(j job) (bad bool) {
	if j.kind == jobSweepX || j.kind == jobSweepY {
		nc := (s.ny + rowChunk - 1) / rowChunk
		if j.kind == jobSweepY {
			nc = (s.nx + blockCols - 1) / blockCols
		}
		for i, w := range s.workers {
			w.chunks.set(i*nc/len(s.workers), (i+1)*nc/len(s.workers))
		}
	}
	if n := len(s.workers) - 1; n > 0 {
		s.job = j
		s.pending.Store(int64(n))
		s.gen.Add(1)
		for _, w := range s.workers[1:] {
			w.wake.wakeUp()
		}
	}
	t0 := time.Now()
	s.workers[0].do(j)
	s.done.await(&s.pending, 0, s.spinFor(time.Since(t0)))
	if j.sp.speed || j.kind == jobSpeeds {
		s.sx, s.sy = 0, 0
		for _, w := range s.workers {
			s.sx, s.sy = max(s.sx, w.sx), max(s.sy, w.sy)
		}
	}
	for _, w := range s.workers {
		bad = bad || w.bad
	}
	return bad
}

// Hand-off between the stepping goroutine and the workers. A step is three
// or four dispatches a few milliseconds apart. With a channel per worker and
// a sync.WaitGroup, every dispatch woke a parked goroutine at each end; on a
// two-core virtual machine a worker then started 0.3-0.9 ms after the
// dispatch, against 1.5-7 ms for its share of a 512x512 sweep
// (docs/speed.md). So a waiting goroutine first polls an atomic counter for
// a while, and only then sleeps on a channel. It polls only when every
// worker can have a processor of its own (threads <= GOMAXPROCS), and for
// at most a quarter of the time its own last job took (and spinMax): when
// the other side is late because the processors are busy with other work,
// the polling wastes at most a quarter of the solver's own work.

// spinMax bounds the polling of a waiting goroutine.
const spinMax = time.Millisecond

// spinFor is how long a goroutine whose last job took busy polls before it
// sleeps.
func (s *Solver) spinFor(busy time.Duration) time.Duration {
	if !s.spin {
		return 0
	}
	return min(busy/4, spinMax)
}

// parker lets one goroutine wait until an atomic counter holds a value that
// other goroutines set.
type parker struct {
	sleeping atomic.Bool
	wake     chan struct{} // capacity 1: the token of wakeUp
}

// await returns once v holds want. It first polls v for up to spin, then
// sleeps until wakeUp, which whoever sets v must call after setting it.
func (p *parker) await(v *atomic.Int64, want int64, spin time.Duration) {
	if spin > 0 {
		start := time.Now()
		for i := 1; v.Load() != want; i++ {
			if i%256 == 0 && time.Since(start) > spin {
				break
			}
		}
	}
	for v.Load() != want {
		p.sleeping.Store(true)
		// v may have changed before the flag was up: then take the flag
		// down again, unless a waker already has, whose token must be
		// received before the next wait.
		if v.Load() == want && p.sleeping.CompareAndSwap(true, false) {
			return
		}
		<-p.wake
	}
}

// wakeUp wakes the goroutine sleeping in await, if there is one.
func (p *parker) wakeUp() {
	if p.sleeping.CompareAndSwap(true, false) {
		p.wake <- struct{}{}
	}
}

func (w *worker) do(j job) {
	w.sx, w.sy, w.bad = 0, 0, false
	switch j.kind {
	case jobSweepX:
		w.sp = j.sp
		w.sp.scr = w.scr
		w.sweepX(&w.sp)
	case jobSweepY:
		w.sp = j.sp
		w.sp.scr = w.scr
		w.sweepY(&w.sp)
	case jobSource:
		w.source(j.t, j.dt)
		w.speeds(j.sp.speed)
	case jobSpeeds:
		w.speeds(true)
	}
}

// line runs kern on [lo, hi) of the line variables q (one for Burgers,
// four for Euler) and folds what it reports into res.
func (res *lineResult) line(kern lineKernel, sp *sweepParams, q [][]float64, lo, hi int) {
	var r lineResult
	if len(q) == 1 {
		r = kern(sp, q[0][lo:hi], nil, nil, nil)
	} else {
		r = kern(sp, q[0][lo:hi], q[1][lo:hi], q[2][lo:hi], q[3][lo:hi])
	}
	res.sn, res.st = max(res.sn, r.sn), max(res.st, r.st)
	res.bad = res.bad || r.bad
}

// span is a run of chunks [front, back), packed in one word (front<<32 |
// back) so that its owner and the others can take from it at once.
type span struct{ v atomic.Uint64 }

func (r *span) set(front, back int) { r.v.Store(uint64(front)<<32 | uint64(back)) }

// take removes a chunk from the front (or the back) and returns it, or -1
// when none is left.
func (r *span) take(back bool) int {
	for {
		x := r.v.Load()
		f, b := int(x>>32), int(uint32(x))
		if f >= b {
			return -1
		}
		c := f
		if back {
			b--
			c = b
		} else {
			f++
		}
		if r.v.CompareAndSwap(x, uint64(f)<<32|uint64(b)) {
			return c
		}
	}
}

// chunk is the next chunk of the current sweep for w: from the front of its
// own run, else from the back of another worker's; -1 when none is left.
func (w *worker) chunk() int {
	if c := w.chunks.take(false); c >= 0 {
		return c
	}
	ws := w.s.workers
	for k := 1; k < len(ws); k++ {
		if c := ws[(w.id+k)%len(ws)].chunks.take(true); c >= 0 {
			return c
		}
	}
	return -1
}

// sweepX takes chunks of rows until none is left; for each it fills the
// ghost cells and runs the kernel on the rows, in place in the state.
func (w *worker) sweepX(sp *sweepParams) {
	s := w.s
	u, stride, kern := s.st.U, s.stride, s.kern
	var res lineResult
	for {
		c := w.chunk()
		if c < 0 {
			break
		}
		j0 := c * rowChunk
		j1 := min(j0+rowChunk, s.ny)
		s.st.fillGhostsX(s.prob.BC[West], s.prob.BC[East], j0, j1)
		for j := j0; j < j1; j++ {
			res.line(kern, sp, u, (j+s.g)*stride, (j+s.g+1)*stride)
		}
	}
	w.sx, w.sy, w.bad = res.sn, res.st, res.bad
}

// sweepY takes blocks of blockCols columns until none is left; for each it
// fills the ghost cells and runs the kernel on the columns: with a
// four-column kernel (the default Euler kernels) in place, four at a time;
// the columns left (all, without one) are gathered (ghost rows included)
// into the worker's scratch, run through the line kernel one by one, and
// their interior scattered back. The Euler line variables are (rho, my,
// mx, E).
func (w *worker) sweepY(sp *sweepParams) {
	s := w.s
	stride, g, ny, kern, kern4 := s.stride, s.g, s.ny, s.kern, s.kern4
	n := ny + 2*g
	var q [4][]float64
	perm := [4]int{0, 2, 1, 3}
	nv := len(s.st.U)
	for k := 0; k < nv; k++ {
		q[k] = s.st.U[perm[k]]
	}
	var res lineResult
	for {
		c := w.chunk()
		if c < 0 {
			break
		}
		c0 := c * blockCols
		bw := min(blockCols, s.nx-c0)
		s.st.fillGhostsY(s.prob.BC[South], s.prob.BC[North], c0, c0+bw)
		i0 := g + c0
		if kern4 != nil {
			for bw >= 4 {
				r := kern4(sp, q[0][i0:], q[1][i0:], q[2][i0:], q[3][i0:], stride, n)
				res.sn, res.st = max(res.sn, r.sn), max(res.st, r.st)
				res.bad = res.bad || r.bad
				i0, bw = i0+4, bw-4
			}
		}
		if bw == 0 {
			continue
		}
		for k := 0; k < nv; k++ {
			src, dst := q[k], w.yb[k]
			for jj := 0; jj < n; jj++ {
				row := src[jj*stride+i0 : jj*stride+i0+bw]
				for c, x := range row {
					dst[c*n+jj] = x
				}
			}
		}
		for c := 0; c < bw; c++ {
			res.line(kern, sp, w.yb[:nv], c*n, (c+1)*n)
		}
		for k := 0; k < nv; k++ {
			src, dst := w.yb[k], q[k]
			for jj := g; jj < g+ny; jj++ {
				row := dst[jj*stride+i0 : jj*stride+i0+bw]
				for c := range row {
					row[c] = src[c*n+jj]
				}
			}
		}
	}
	w.sx, w.sy, w.bad = res.st, res.sn, res.bad
}

// source adds dt * S(x_c, y_c, t) to the worker's rows.
func (w *worker) source(t, dt float64) {
	s := w.s
	f := s.prob.Source
	for j := w.j0; j < w.j1; j++ {
		for i := 0; i < s.nx; i++ {
			f(s.xc[i], s.yc[j], t, w.src)
			idx := s.st.Index(i, j)
			for k, q := range s.st.U {
				q[idx] += float64(dt * w.src[k])
			}
		}
	}
}

// speeds checks the worker's rows and, with speed, finds their wave-speed
// maxima.
func (w *worker) speeds(speed bool) {
	s := w.s
	u, g := s.st.U, s.st.Gamma
	var res lineResult
	for j := w.j0; j < w.j1; j++ {
		lo, hi := s.st.Index(0, j), s.st.Index(0, j)+s.nx
		if len(u) == 1 {
			for _, x := range u[0][lo:hi] {
				checkBurgers(&res, speed, x)
			}
			res.st = res.sn
			continue
		}
		r, m, t, e := u[0][lo:hi], u[1][lo:hi], u[2][lo:hi], u[3][lo:hi]
		for i := range r {
			checkEuler(&res, speed, g, r[i], m[i], t[i], e[i])
		}
	}
	w.sx, w.sy, w.bad = res.sn, res.st, res.bad
}

// failure scans the state for the first non-physical cell (row by row) and
// describes it.
func (s *Solver) failure() *Failure {
	st := s.st
	f := &Failure{T: s.t, Step: s.steps + 1, I: -1, J: -1, Vars: st.Eq.Vars(), Reason: "non-physical state"}
	vals := make([]float64, len(st.U))
	for j := 0; j < st.NY; j++ {
		for i := 0; i < st.NX; i++ {
			idx := st.Index(i, j)
			for k := range st.U {
				vals[k] = st.U[k][idx]
			}
			if reason := badCell(st.Eq, st.Gamma, vals); reason != "" {
				f.I, f.J, f.Values, f.Reason = i, j, vals, reason
				return f
			}
		}
	}
	return f
}

// badCell names what is wrong with the conserved state c, or returns "".
func badCell(eq Equation, gamma float64, c []float64) string {
	for _, x := range c {
		if math.IsNaN(x) {
			return "NaN"
		}
		if math.IsInf(x, 0) {
			return "Inf"
		}
	}
	if eq == Burgers {
		return ""
	}
	if !(c[0] > 0) {
		return "non-positive density"
	}
	p := (gamma - 1) * (c[3] - 0.5*(float64(c[1]*c[1])+float64(c[2]*c[2]))/c[0])
	if !(p > 0) {
		return fmt.Sprintf("non-positive pressure p=%g", p)
	}
	return ""
}

// Run runs case v to its final time and reports the result: totals at the
// start and end, errors against exact cell averages where the case has an
// exact solution, and the case's functionals. A breakdown returns a
// *Failure; a cancelled ctx stops the run between steps with ctx.Err().
// A ctx from WithProgress is told t/t_end after each step.
// cell_updates_per_s counts nx*ny*steps over the time-stepping wall time;
// wall_s is the whole run including set-up and error evaluation.
func Run(ctx context.Context, v Values) (*Result, error) {
	start := time.Now()
	s, err := NewSolver(v)
	if err != nil {
		return nil, err
	}
	defer s.Close()
	st := s.st
	vars := st.Eq.Vars()
	init := st.Totals()
	// Worker 0 is this goroutine: held on its thread while it steps, so
	// that the thread's CPU clock measures the stepping alone.
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	cpu0, cpuOK := threadCPU()
	prog := progressOf(ctx)
	setProgress(prog, s.t, s.tEnd)
	stepStart := time.Now()
	for s.t < s.tEnd {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		if s.steps >= s.cfg.MaxSteps {
			return nil, &Failure{T: s.t, Step: s.steps, I: -1, J: -1, Vars: vars,
				Reason: fmt.Sprintf("step guard exceeded: %d steps taken, t_end=%g not reached", s.steps, s.tEnd)}
		}
		dt := s.MaxDt()
		if need := (s.tEnd - s.t) / dt; s.steps == 0 && need > 10*float64(s.cfg.MaxSteps) {
			// Fail at once rather than after max_steps steps: even a tenfold
			// growth of dt would not reach t_end within the guard.
			return nil, &Failure{T: s.t, Step: s.steps, I: -1, J: -1, Vars: vars,
				Reason: fmt.Sprintf("step guard: the first step dt=%.3g needs about %.3g steps to reach t_end=%g, over max_steps=%d",
					dt, need, s.tEnd, s.cfg.MaxSteps)}
		}
		last := s.t+float64(dt*(1+1e-12)) >= s.tEnd
		if last {
			dt = s.tEnd - s.t
		}
		if err := s.Step(dt); err != nil {
			return nil, err
		}
		if last {
			s.t, st.T = s.tEnd, s.tEnd
		}
		setProgress(prog, s.t, s.tEnd)
	}
	stepWall := time.Since(stepStart).Seconds()
	cpu1, ok := threadCPU()
	s.Close()
	var cpuS float64
	if cpuOK && ok && (s.cpuOK || len(s.workers) == 1) {
		cpuS = (cpu1 - cpu0 + s.cpu).Seconds()
	}
	a := Assess(s.prob, init, st, s.cfg.Quad, s.cfg.Threads)
	res := &Result{
		Case: v.Case, Params: v.Map(), NX: s.nx, NY: s.ny, Steps: s.steps, TFinal: s.t,
		Totals: a.Totals, Errors: a.Errors, Functionals: a.Functionals, Final: st, Kernel: s.kernel(), CPUS: cpuS,
	}
	if stepWall > 0 {
		res.CellUpdatesPerS = float64(s.nx*s.ny) * float64(s.steps) / stepWall
	}
	res.WallS = time.Since(start).Seconds()
	return res, nil
}

// ExactAverages returns a state with the layout of like holding the exact
// cell averages of the conserved variables of p at time like.T. Without
// p.Breaks they are taken by the tensor Gauss-Legendre rule with quad points
// per direction; with it each cell is cut at the breaks and each piece
// integrated to round-off, whatever quad (splitAverages). p.Exact must not
// be nil.
func ExactAverages(p *Problem, like *State, quad, threads int) *State {
	ex := &State{Eq: like.Eq, Gamma: like.Gamma, NX: like.NX, NY: like.NY, G: like.G,
		X0: like.X0, Y0: like.Y0, DX: like.DX, DY: like.DY, T: like.T, U: make([][]float64, len(like.U))}
	for k := range ex.U {
		ex.U[k] = make([]float64, len(like.U[k]))
	}
	t := like.T
	prim := func(x, y float64, w []float64) { p.Exact(x, y, t, w) }
	if p.Breaks != nil {
		xs, ys := p.Breaks(t)
		splitAverages(ex, sortedBreaks(xs), sortedBreaks(ys), quad, threads, prim)
		return ex
	}
	cellAverages(ex, newCellRule(quad, like.DX, like.DY), threads, prim)
	return ex
}
