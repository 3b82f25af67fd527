// Package web is the live status page of a coordinator: one HTML page with
// its script and styles (embedded) that polls a JSON API answered from the
// coordinator's state and its store.
//
//	GET /                               the page
//	GET /api/sweeps                     wire.StatusReply: every sweep and the live workers
//	GET /api/sweeps/{name}/status       SweepView: one sweep and the live workers
//	GET /api/sweeps/{name}/tables       table.Set: convergence tables and failures so far,
//	                                    the JSON of 'fvsweep table --format json', but that a
//	                                    grid still to come is running, queued or canceled
//	                                    rather than pending
//	GET /api/sweeps/{name}/tables.html  the same tables as an HTML fragment (table.WriteHTML)
//	GET /api/sweeps/{name}/progress     Progress: elapsed time, throughput, ETA, jobs running
//	GET /api/workers                    WorkersView: live workers, when each was last heard from,
//	                                    how busy over the last minute, what each runs
//
// The first two are what 'fvsweep status --json' prints.
package web

import (
	"bytes"
	"context"
	"crypto/subtle"
	"embed"
	"encoding/json"
	"errors"
	"fmt"
	"net"
	"net/http"
	"slices"
	"strings"
	"sync"
	"time"

	"github.com/hashicorp/go-hclog"

	"fvsweep/coordinator"
	"fvsweep/coordinator/internal/loopback"
	"fvsweep/store"
	"fvsweep/sweep/job"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/table"
	"fvsweep/sweep/wire"
)

//go:embed index.html app.js style.css
var assets embed.FS

// TokenCookie is the cookie a ?token= request sets.
const TokenCookie = "fvsweep_token"

// Options configure the status page server.
type Options struct {
	// Addr is HOST:PORT to listen on; port 0 picks a free one.
	Addr string
	// Token, if set, must come with every request: as "Authorization:
	// Bearer TOKEN", or once as ?token=TOKEN on any address, which sets a
	// cookie and redirects to the address without it. Listening on
	// anything but a loopback address requires a token.
	Token string
	// Log receives the HTTP server's errors (nil: discard).
	Log hclog.Logger
}

// Server is a running status page server.
type Server struct {
	srv  *http.Server
	ln   net.Listener
	done chan error
}

// CheckAddr reports whether the status page may listen on addr
// (HOST:PORT) with token: any host but a loopback one needs a token.
func CheckAddr(addr, token string) error {
	host, _, err := net.SplitHostPort(addr)
	if err != nil {
		return fmt.Errorf("status page address %q: want HOST:PORT: %w", addr, err)
	}
	if !loopback.Host(host) && token == "" {
		return fmt.Errorf("status page on %s: an address other than loopback needs a token (--http-token or --token), or listen on 127.0.0.1", addr)
	}
	return nil
}

// Serve starts serving the status page of c on o.Addr (see CheckAddr).
func Serve(c *coordinator.Coordinator, o Options) (*Server, error) {
	if err := CheckAddr(o.Addr, o.Token); err != nil {
		return nil, err
	}
	ln, err := net.Listen("tcp", o.Addr)
	if err != nil {
		return nil, fmt.Errorf("status page: %w", err)
	}
	log := o.Log
	if log == nil {
		log = hclog.NewNullLogger()
	}
	w := &Server{ln: ln, done: make(chan error, 1), srv: &http.Server{
		Handler:           Handler(c, o.Token),
		ReadHeaderTimeout: 5 * time.Second,
		IdleTimeout:       time.Minute,
		ErrorLog:          log.StandardLogger(&hclog.StandardLoggerOptions{ForceLevel: hclog.Debug}),
	}}
	go func() {
		err := w.srv.Serve(ln)
		if errors.Is(err, http.ErrServerClosed) {
			err = nil
		}
		w.done <- err
	}()
	return w, nil
}

// URL is the page's address, http://HOST:PORT/.
func (w *Server) URL() string { return "http://" + w.ln.Addr().String() + "/" }

// Close stops the server, waiting up to 2 s for requests in progress.
func (w *Server) Close() error {
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Second)
	defer cancel()
	err := w.srv.Shutdown(ctx)
	if serr := <-w.done; err == nil {
		err = serr
	}
	return err
}

// SweepView is one sweep's status with the live workers: the answer of
// GET /api/sweeps/{name}/status and what 'status SWEEP --json' prints.
type SweepView struct {
	wire.SweepStatus
	Workers []wire.WorkerReport `json:"workers"`
}

// WorkerView is a live worker's last report and when it came, by the
// coordinator's clock.
type WorkerView struct {
	wire.WorkerReport
	LastSeen time.Time `json:"last_seen"`
	SeenAgoS float64   `json:"seen_ago_s"`
	// BusyRecent is the fraction of its slot-time busy over the last
	// minute of its reports (Busy is since it started, finished jobs only).
	BusyRecent float64 `json:"busy_recent"`
	// Jobs are its running jobs with their case, group and grid.
	Jobs []RunningView `json:"jobs"`
}

// WorkersView is GET /api/workers; Now is the coordinator's clock, against
// which a job's Since gives how long it has run.
type WorkersView struct {
	Now     time.Time    `json:"now"`
	Workers []WorkerView `json:"workers"`
}

// webHandler serves the page and the API.
type webHandler struct {
	c     *coordinator.Coordinator
	token string
	mux   *http.ServeMux

	live *tracker

	mu       sync.Mutex // serialises table builds
	tables   map[string]builtTables
	settings map[string][]job.StudySettings // of sweeps whose record lacks them, parsed once
}

// builtTables is a sweep's tables as JSON (table.Set) and as an HTML
// fragment, built at store generation gen in took.
type builtTables struct {
	gen  uint64
	at   time.Time
	took time.Duration
	set  table.Set
	run  string // the running jobs and cancel mark the statuses show
	json []byte
	html []byte
	etag string
}

// send answers the tables (as HTML if html), or 304 Not Modified to a
// client that has them (If-None-Match), which spares a large sweep's tables
// every poll.
func (b builtTables) send(w http.ResponseWriter, r *http.Request, html bool) {
	w.Header().Set("ETag", b.etag)
	if r.Header.Get("If-None-Match") == b.etag {
		w.WriteHeader(http.StatusNotModified)
		return
	}
	if html {
		w.Header().Set("Content-Type", "text/html; charset=utf-8")
		w.Write(b.html)
		return
	}
	writeJSON(w, b.json, nil)
}

// Handler returns the status page and its API. With token "" it answers
// only requests addressed to a loopback name (Host localhost, 127.0.0.1 or
// [::1]), so that a page of another site cannot reach it through a DNS
// name rebound to 127.0.0.1; otherwise every request must carry the token
// (see WebOptions.Token).
func Handler(c *coordinator.Coordinator, token string) http.Handler {
	h := &webHandler{c: c, token: token, mux: http.NewServeMux(), tables: map[string]builtTables{},
		settings: map[string][]job.StudySettings{}, live: newTracker()}
	h.mux.Handle("GET /", http.FileServerFS(assets))
	h.mux.HandleFunc("GET /api/sweeps", h.sweeps)
	h.mux.HandleFunc("GET /api/sweeps/{name}/status", h.sweepStatus)
	h.mux.HandleFunc("GET /api/sweeps/{name}/tables", h.sweepTables)
	h.mux.HandleFunc("GET /api/sweeps/{name}/tables.html", h.sweepTables)
	h.mux.HandleFunc("GET /api/sweeps/{name}/progress", h.sweepProgress)
	h.mux.HandleFunc("GET /api/workers", h.workers)
	return h
}

func (h *webHandler) ServeHTTP(w http.ResponseWriter, r *http.Request) {
	hd := w.Header()
	hd.Set("Content-Security-Policy", "default-src 'self'; img-src 'self' data:; frame-ancestors 'none'")
	hd.Set("X-Content-Type-Options", "nosniff")
	hd.Set("Referrer-Policy", "no-referrer")
	hd.Set("Cache-Control", "no-store")
	if h.token == "" {
		host, _, err := net.SplitHostPort(r.Host)
		if err != nil {
			host = r.Host
		}
		if !loopback.Host(host) {
			http.Error(w, "this status page answers only on localhost, 127.0.0.1 or [::1]", http.StatusMisdirectedRequest)
			return
		}
		h.mux.ServeHTTP(w, r)
		return
	}
	if q := r.URL.Query(); q.Has("token") {
		if !h.tokenOK(q.Get("token")) {
			http.Error(w, "wrong token", http.StatusUnauthorized)
			return
		}
		http.SetCookie(w, &http.Cookie{Name: TokenCookie, Value: h.token, Path: "/",
			HttpOnly: true, SameSite: http.SameSiteStrictMode, Secure: r.TLS != nil})
		q.Del("token")
		u := *r.URL
		u.RawQuery = q.Encode()
		http.Redirect(w, r, u.RequestURI(), http.StatusSeeOther)
		return
	}
	if !h.authorized(r) {
		hd.Set("WWW-Authenticate", `Bearer realm="fvsweep"`)
		http.Error(w, "unauthorized: send Authorization: Bearer TOKEN, or open the page once with ?token=TOKEN", http.StatusUnauthorized)
		return
	}
	h.mux.ServeHTTP(w, r)
}

func (h *webHandler) tokenOK(s string) bool {
	return s != "" && subtle.ConstantTimeCompare([]byte(s), []byte(h.token)) == 1
}

// authorized reports whether r carries the token as a bearer token or in
// the cookie.
func (h *webHandler) authorized(r *http.Request) bool {
	if a, ok := strings.CutPrefix(r.Header.Get("Authorization"), "Bearer "); ok {
		return h.tokenOK(strings.TrimSpace(a))
	}
	ck, err := r.Cookie(TokenCookie)
	return err == nil && h.tokenOK(ck.Value)
}

// writeJSON answers v, or err as {"error": ...} with 404 for an unknown
// sweep and 500 otherwise.
func writeJSON(w http.ResponseWriter, v any, err error) {
	w.Header().Set("Content-Type", "application/json")
	if err != nil {
		code := http.StatusInternalServerError
		if errors.Is(err, store.ErrNotFound) {
			code = http.StatusNotFound
		}
		w.WriteHeader(code)
		json.NewEncoder(w).Encode(map[string]string{"error": err.Error()})
		return
	}
	if b, ok := v.([]byte); ok {
		w.Write(b)
		return
	}
	json.NewEncoder(w).Encode(v)
}

func (h *webHandler) sweeps(w http.ResponseWriter, r *http.Request) {
	st, err := h.c.Status("")
	if st == nil {
		st = []wire.SweepStatus{}
	}
	writeJSON(w, wire.StatusReply{Sweeps: st, Workers: h.c.Workers()}, err)
}

func (h *webHandler) sweepStatus(w http.ResponseWriter, r *http.Request) {
	st, err := h.c.Status(r.PathValue("name"))
	if err != nil {
		writeJSON(w, nil, err)
		return
	}
	writeJSON(w, SweepView{SweepStatus: st[0], Workers: h.c.Workers()}, nil)
}

func (h *webHandler) workers(w http.ResponseWriter, r *http.Request) {
	now := time.Now()
	live := h.c.Workers()
	seen := h.c.LastSeen()
	v := WorkersView{Now: now, Workers: make([]WorkerView, len(live))}
	totals := map[string]int{}
	if st, err := h.c.Status(""); err == nil {
		for _, s := range st {
			totals[s.Sweep] = s.JobsTotal
		}
	}
	for i, rep := range live {
		at := seen[rep.ID]
		h.live.mu.Lock()
		jobs := h.live.running(h.c.Store(), []wire.WorkerReport{rep}, totals, "", now)
		h.live.mu.Unlock()
		v.Workers[i] = WorkerView{WorkerReport: rep, LastSeen: at, SeenAgoS: now.Sub(at).Seconds(),
			BusyRecent: h.live.busyRecent(rep), Jobs: jobs}
	}
	writeJSON(w, v, nil)
}

func (h *webHandler) sweepProgress(w http.ResponseWriter, r *http.Request) {
	st, err := h.c.Status(r.PathValue("name"))
	if err != nil {
		writeJSON(w, nil, err)
		return
	}
	writeJSON(w, h.live.progress(h.c.Store(), st[0], h.c.Workers(), h.c.LastSeen(), time.Now()), nil)
}

// runMark names the jobs of sweep name running now and whether it is
// canceled: what the statuses of its tables' grids still to come show.
func (h *webHandler) runMark(name string) (map[string]bool, bool, string) {
	running := map[string]bool{}
	var ids []string
	for _, w := range h.c.Workers() {
		for _, c := range w.Current {
			if c.Sweep == name {
				running[c.JobID] = true
				ids = append(ids, c.JobID)
			}
		}
	}
	slices.Sort(ids)
	canceled := false
	if st, err := h.c.Status(name); err == nil {
		canceled = st[0].Canceled
	}
	return running, canceled, fmt.Sprint(canceled, ids)
}

// sweepTables answers the tables of a sweep, as JSON or (at tables.html)
// HTML, rebuilt when outcomes were stored since the last build, but not
// more often than once a second (or four times the last build's duration,
// for a large sweep). The ETag names the build.
func (h *webHandler) sweepTables(w http.ResponseWriter, r *http.Request) {
	name := r.PathValue("name")
	html := strings.HasSuffix(r.URL.Path, ".html")
	h.mu.Lock()
	defer h.mu.Unlock()
	gen := h.c.Generation()
	now := time.Now()
	running, canceled, mark := h.runMark(name)
	b, ok := h.tables[name]
	fresh := ok && (b.gen == gen || now.Sub(b.at) < max(time.Second, 4*b.took))
	if fresh && b.run == mark {
		b.send(w, r, html)
		return
	}
	set := b.set
	if !fresh {
		var err error
		if set, err = h.build(name); err != nil {
			writeJSON(w, nil, err)
			return
		}
		b = builtTables{gen: gen, at: now, set: set}
	}
	b.run = mark
	set = refined(set, running, canceled)
	body, err := json.Marshal(set)
	if err != nil {
		writeJSON(w, nil, err)
		return
	}
	var frag bytes.Buffer
	if err := table.WriteHTML(&frag, set.Studies); err != nil {
		writeJSON(w, nil, err)
		return
	}
	if !fresh {
		b.took = time.Since(now)
	}
	b.json, b.html, b.etag = body, frag.Bytes(), fmt.Sprintf(`"%d-%d"`, b.gen, time.Now().UnixNano())
	h.tables[name] = b
	b.send(w, r, html)
}

// build builds the convergence tables of sweep name from the store as they
// stand: table.Build over its jobs and stored outcomes with the study
// settings of its record (of its spec, parsed once, for a record written
// before the store kept them).
func (h *webHandler) build(name string) (table.Set, error) {
	db := h.c.Store()
	set := table.Set{Sweep: name}
	rec, err := db.Sweep(name)
	if err != nil {
		return set, err
	}
	settings := rec.Studies
	if settings == nil {
		s, ok := h.settings[name]
		if !ok {
			s = spec.StoredSettings(rec.SpecFile, rec.Spec)
			h.settings[name] = s
		}
		settings = s
	}
	jobs, err := db.Jobs(name)
	if err != nil {
		return set, err
	}
	outs, err := db.Outcomes(name)
	if err != nil {
		return set, err
	}
	set.Studies, set.Failures, err = table.Build(settings, jobs, outs, table.Options{})
	if err != nil {
		return set, fmt.Errorf("tables of %s: %w", name, err)
	}
	return set, nil
}
