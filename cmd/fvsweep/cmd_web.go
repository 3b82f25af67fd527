package main

// The live status page of serve and run (coordinator.ServeWeb).

import (
	"encoding/json"
	"flag"
	"fmt"
	"fvsweep/coordinator/web"
	"io"
	"net/http"
	"net/url"
	"os"
	"strings"
	"time"

	"github.com/hashicorp/go-hclog"

	"fvsweep/sweep/wire"
)

// webFlags are --http and --http-token of the commands that run a
// coordinator.
type webFlags struct {
	addr, token string
}

// webDocs document the flags of webFlags.
var webDocs = []flagDoc{
	{"http", "HOST:PORT", "serve the live status page and its JSON API there while the coordinator runs (e.g. 127.0.0.1:8080); an address other than loopback needs a token", "off"},
	{"http-token-file", "FILE", `token the page and the API ask for: send "Authorization: Bearer T", or open http://HOST:PORT/?token=T once in a browser, which sets a cookie`, "$FVSWEEP_HTTP_TOKEN_FILE, $FVSWEEP_HTTP_TOKEN, else the readers' secret, else --token"},
}

func (f *webFlags) register(fs *flag.FlagSet) {
	fs.StringVar(&f.addr, "http", os.Getenv("FVSWEEP_HTTP"), "")
	registerSecret(fs, &f.token, "http-token", "FVSWEEP_HTTP_TOKEN")
}

// tokenFor is --http-token, else the NATS --token.
func (f *webFlags) tokenFor(c *common) string {
	if f.token != "" {
		return f.token
	}
	return c.token
}

// check refuses an --http address that start would refuse, before
// anything is started.
func (f *webFlags) check(c *common) error {
	if f.addr == "" {
		return nil
	}
	if err := web.CheckAddr(f.addr, f.tokenFor(c)); err != nil {
		return fmt.Errorf("--http: %w", err)
	}
	return nil
}

// start serves the status page of s on --http, if given, and says where.
// s.close stops it.
func (f *webFlags) start(s *service, c *common, log hclog.Logger) error {
	if f.addr == "" {
		return nil
	}
	tok := f.token
	if tok == "" {
		tok = s.readToken
	}
	if tok == "" {
		tok = c.token
	}
	w, err := web.Serve(s.coord, web.Options{Addr: f.addr, Token: tok, Log: log.Named("http")})
	if err != nil {
		return fmt.Errorf("--http: %w", err)
	}
	s.web = w
	if tok == "" {
		fmt.Printf("status page: %s\n", w.URL())
	} else {
		fmt.Printf("status page: %s (open it once as %s?token=YOUR_TOKEN)\n", w.URL(), w.URL())
	}
	return nil
}

// pageStatus asks the JSON API of the status page at addr (HOST:PORT or
// http://HOST:PORT) for the status of sweep name ("" for every sweep).
func pageStatus(addr, token, name string) (wire.StatusReply, error) {
	var rep wire.StatusReply
	base := strings.TrimSuffix(addr, "/")
	if !strings.Contains(base, "://") {
		base = "http://" + base
	}
	path := "/api/sweeps"
	if name != "" {
		path += "/" + url.PathEscape(name) + "/status"
	}
	req, err := http.NewRequest("GET", base+path, nil)
	if err != nil {
		return rep, fmt.Errorf("--http %s: %w", addr, err)
	}
	if token != "" {
		req.Header.Set("Authorization", "Bearer "+token)
	}
	res, err := (&http.Client{Timeout: 10 * time.Second}).Do(req)
	if err != nil {
		return rep, fmt.Errorf("status page: %w", err)
	}
	defer res.Body.Close()
	body, err := io.ReadAll(io.LimitReader(res.Body, 256<<20))
	if err != nil {
		return rep, fmt.Errorf("status page %s: %w", base+path, err)
	}
	if res.StatusCode != http.StatusOK {
		var e struct {
			Error string // the key "error", matched without regard to case
		}
		if json.Unmarshal(body, &e) != nil || e.Error == "" {
			e.Error = strings.TrimSpace(string(body))
		}
		return rep, fmt.Errorf("status page %s: %s: %s", base+path, res.Status, e.Error)
	}
	if name == "" {
		err = json.Unmarshal(body, &rep)
	} else {
		var v web.SweepView
		err = json.Unmarshal(body, &v)
		rep = wire.StatusReply{Sweeps: []wire.SweepStatus{v.SweepStatus}, Workers: v.Workers}
	}
	if err != nil {
		return rep, fmt.Errorf("status page %s: %w", base+path, err)
	}
	return rep, nil
}
