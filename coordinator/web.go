package coordinator

// The live status page: one HTML page with its script and styles (embedded
// from coordinator/web) that polls a JSON API answered from the
// coordinator's state and the store.
//
//	GET /                          the page
//	GET /api/sweeps                wire.StatusReply: every sweep and the live workers
//	GET /api/sweeps/{name}/status  SweepView: one sweep and the live workers
//	GET /api/sweeps/{name}/tables  TablesView: convergence tables and failures so far
//	GET /api/workers               WorkersView: live workers, when each was last heard from
//
// The first two are what 'fvsweep status --json' prints.

import (
	"bytes"
	"context"
	"crypto/subtle"
	"embed"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"math"
	"net"
	"net/http"
	"strings"
	"sync"
	"time"

	"github.com/hashicorp/go-hclog"

	"fvsweep/store"
	"fvsweep/sweep/report"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/verify"
	"fvsweep/sweep/wire"
)

//go:embed web
var webAssets embed.FS

// WebTokenCookie is the cookie a ?token= request sets.
const WebTokenCookie = "fvsweep_token"

// WebOptions configure the status page server.
type WebOptions struct {
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

// Web is a running status page server.
type Web struct {
	srv  *http.Server
	ln   net.Listener
	done chan error
}

// CheckWebAddr reports whether the status page may listen on addr
// (HOST:PORT) with token: any host but a loopback one needs a token.
func CheckWebAddr(addr, token string) error {
	host, _, err := net.SplitHostPort(addr)
	if err != nil {
		return fmt.Errorf("status page address %q: want HOST:PORT: %w", addr, err)
	}
	if !loopbackName(host) && token == "" {
		return fmt.Errorf("status page on %s: an address other than loopback needs a token (--http-token or --token), or listen on 127.0.0.1", addr)
	}
	return nil
}

// ServeWeb starts serving the status page of c on o.Addr (see
// CheckWebAddr).
func (c *Coordinator) ServeWeb(o WebOptions) (*Web, error) {
	if err := CheckWebAddr(o.Addr, o.Token); err != nil {
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
	w := &Web{ln: ln, done: make(chan error, 1), srv: &http.Server{
		Handler:           c.WebHandler(o.Token),
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
func (w *Web) URL() string { return "http://" + w.ln.Addr().String() + "/" }

// Close stops the server, waiting up to 2 s for requests in progress.
func (w *Web) Close() error {
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Second)
	defer cancel()
	err := w.srv.Shutdown(ctx)
	if serr := <-w.done; err == nil {
		err = serr
	}
	return err
}

// loopbackName reports whether host (a name or an address, with or
// without brackets) only ever means this machine.
func loopbackName(host string) bool {
	host = strings.TrimSuffix(strings.TrimPrefix(host, "["), "]")
	if strings.EqualFold(host, "localhost") {
		return true
	}
	ip := net.ParseIP(host)
	return ip != nil && ip.IsLoopback()
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
}

// WorkersView is GET /api/workers; Now is the coordinator's clock, against
// which a job's Since gives how long it has run.
type WorkersView struct {
	Now     time.Time    `json:"now"`
	Workers []WorkerView `json:"workers"`
}

// TablesView is GET /api/sweeps/{name}/tables: a sweep's convergence
// tables as they stand (numbers a grid does not have yet are null), its
// failures with their reasons, and the same tables as an HTML fragment
// (report.WriteTables) for a page to show.
type TablesView struct {
	Sweep    string           `json:"sweep"`
	Built    time.Time        `json:"built"`
	Studies  []StudyTable     `json:"studies"`
	Failures []report.Failure `json:"failures"`
	HTML     string           `json:"html"`
}

// StudyTable is report.Study with undefined numbers as nil.
type StudyTable struct {
	Index   int          `json:"index"`
	Label   string       `json:"label,omitempty"`
	Case    string       `json:"case"`
	Var     string       `json:"var"`
	Norm    string       `json:"norm"`
	Done    int          `json:"done"`
	Failed  int          `json:"failed"`
	Pending int          `json:"pending"`
	Groups  []GroupTable `json:"groups"`
}

// GroupTable is report.Group with undefined numbers as nil.
type GroupTable struct {
	Label   string              `json:"label"`
	Rows    []GridTable         `json:"rows"`
	Order   *float64            `json:"fitted_order"`
	OrderSE *float64            `json:"fitted_order_se"`
	Verdict verify.OrderVerdict `json:"verdict"`
}

// GridTable is report.GridRow with undefined numbers as nil.
type GridTable struct {
	JobID  string   `json:"job_id"`
	NX     int      `json:"nx"`
	NY     int      `json:"ny"`
	H      *float64 `json:"h"`
	Status string   `json:"status"`
	Err    *float64 `json:"err"`
	Order  *float64 `json:"order"`
	WallS  float64  `json:"wall_s"`
}

func finiteOrNil(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

// webHandler serves the page and the API.
type webHandler struct {
	c     *Coordinator
	token string
	mux   *http.ServeMux

	mu     sync.Mutex // serialises table builds
	tables map[string]builtTables
}

// builtTables is the encoded TablesView of a sweep, built at store
// generation gen in took.
type builtTables struct {
	gen  uint64
	at   time.Time
	took time.Duration
	body []byte
	etag string
}

// send answers the tables, or 304 Not Modified to a client that has them
// (If-None-Match), which spares a large sweep's tables every poll.
func (b builtTables) send(w http.ResponseWriter, r *http.Request) {
	w.Header().Set("ETag", b.etag)
	if r.Header.Get("If-None-Match") == b.etag {
		w.WriteHeader(http.StatusNotModified)
		return
	}
	writeJSON(w, b.body, nil)
}

// WebHandler returns the status page and its API. With token "" it answers
// only requests addressed to a loopback name (Host localhost, 127.0.0.1 or
// [::1]), so that a page of another site cannot reach it through a DNS
// name rebound to 127.0.0.1; otherwise every request must carry the token
// (see WebOptions.Token).
func (c *Coordinator) WebHandler(token string) http.Handler {
	h := &webHandler{c: c, token: token, mux: http.NewServeMux(), tables: map[string]builtTables{}}
	assets, err := fs.Sub(webAssets, "web")
	if err != nil {
		panic(err) // the embedded tree is fixed at build time
	}
	h.mux.Handle("GET /", http.FileServerFS(assets))
	h.mux.HandleFunc("GET /api/sweeps", h.sweeps)
	h.mux.HandleFunc("GET /api/sweeps/{name}/status", h.sweepStatus)
	h.mux.HandleFunc("GET /api/sweeps/{name}/tables", h.sweepTables)
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
		if !loopbackName(host) {
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
		http.SetCookie(w, &http.Cookie{Name: WebTokenCookie, Value: h.token, Path: "/",
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
	ck, err := r.Cookie(WebTokenCookie)
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
	seen := h.c.reg.lastSeen()
	v := WorkersView{Now: now, Workers: make([]WorkerView, len(live))}
	for i, rep := range live {
		at := seen[rep.ID]
		v.Workers[i] = WorkerView{WorkerReport: rep, LastSeen: at, SeenAgoS: now.Sub(at).Seconds()}
	}
	writeJSON(w, v, nil)
}

// sweepTables answers the tables of a sweep, rebuilt when outcomes were
// stored since the last build, but not more often than once a second (or
// four times the last build's duration, for a large sweep). The ETag
// names the build.
func (h *webHandler) sweepTables(w http.ResponseWriter, r *http.Request) {
	name := r.PathValue("name")
	h.mu.Lock()
	defer h.mu.Unlock()
	gen := h.c.generation()
	now := time.Now()
	if b, ok := h.tables[name]; ok && (b.gen == gen || now.Sub(b.at) < max(time.Second, 4*b.took)) {
		b.send(w, r)
		return
	}
	v, err := h.c.Tables(name)
	if err != nil {
		writeJSON(w, nil, err)
		return
	}
	body, err := json.Marshal(v)
	if err != nil {
		writeJSON(w, nil, err)
		return
	}
	b := builtTables{gen: gen, at: now, took: time.Since(now), body: body, etag: fmt.Sprintf(`"%d-%d"`, gen, now.UnixNano())}
	h.tables[name] = b
	b.send(w, r)
}

// generation counts the coordinator's store writes so far.
func (c *Coordinator) generation() uint64 {
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.gen
}

// Tables builds the convergence tables of sweep name from the store as
// they stand: report.Build over its jobs and stored outcomes, with the
// study settings of its stored spec.
func (c *Coordinator) Tables(name string) (TablesView, error) {
	v := TablesView{Sweep: name, Built: time.Now(), Studies: []StudyTable{}, Failures: []report.Failure{}}
	rec, err := c.db.Sweep(name)
	if err != nil {
		return v, err
	}
	jobs, err := c.db.Jobs(name)
	if err != nil {
		return v, err
	}
	outs, err := c.db.Outcomes(name)
	if err != nil {
		return v, err
	}
	var sp *spec.Spec
	if rec.Spec != "" {
		parse := c.cfg.ParseSpec
		if parse == nil {
			parse = func(file, src string) (*spec.Spec, error) {
				return spec.Parse(file, []byte(src), spec.DefaultLimits())
			}
		}
		sp, _ = parse(rec.SpecFile, rec.Spec) // nil: study settings take defaults
	}
	studies, fails, err := report.Build(sp, jobs, outs, report.Options{})
	if err != nil {
		return v, fmt.Errorf("tables of %s: %w", name, err)
	}
	var buf bytes.Buffer
	if err := report.WriteTables(&buf, studies); err != nil {
		return v, err
	}
	v.HTML = buf.String()
	if fails != nil {
		v.Failures = fails
	}
	for _, st := range studies {
		t := StudyTable{Index: st.Index, Label: st.Label, Case: st.Case, Var: st.Var, Norm: st.Norm,
			Done: st.Done, Failed: st.Failed, Pending: st.Pending}
		for _, g := range st.Groups {
			gt := GroupTable{Label: g.Label, Verdict: g.Verdict}
			if g.Fitted {
				gt.Order, gt.OrderSE = finiteOrNil(g.Fit.Order), finiteOrNil(g.Fit.OrderSE)
			}
			for _, r := range g.Rows {
				gt.Rows = append(gt.Rows, GridTable{JobID: r.JobID, NX: r.NX, NY: r.NY, H: finiteOrNil(r.H),
					Status: r.Status, Err: finiteOrNil(r.Err), Order: finiteOrNil(r.Order), WallS: r.WallS})
			}
			t.Groups = append(t.Groups, gt)
		}
		v.Studies = append(v.Studies, t)
	}
	return v, nil
}
