package main

// Flags, logging, connections and data-directory handling shared by the
// pipeline commands (run, serve, worker, submit, status, cancel, table,
// export).

import (
	"context"
	"flag"
	"fmt"
	"os"
	"os/signal"
	"syscall"

	"github.com/hashicorp/go-hclog"

	"fvsweep/coordinator/client"
	"fvsweep/coordinator/datadir"
	"fvsweep/sweep/manifest"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/wire"
)

// common holds the flags every pipeline command takes.
type common struct {
	data     string
	nats     string
	logLevel string
	logJSON  bool

	// lim are the spec limits of the commands that take --job-limit and
	// --mem-limit (zero: the defaults).
	lim spec.Limits
	// progs are the outside programs a spec may name (--solver FILE).
	progs []*manifest.Manifest

	// Credentials and TLS (client.DialOptions).
	token, user, creds, nkey string
	tls                      client.TLSFiles
}

// register adds --data, --nats, --log-level and --log-json to fs, with
// defaults from FVSWEEP_DATA and FVSWEEP_NATS.
func (c *common) register(fs *flag.FlagSet) {
	data := os.Getenv("FVSWEEP_DATA")
	if data == "" {
		data = datadir.Default
	}
	fs.StringVar(&c.data, "data", data, "")
	fs.StringVar(&c.nats, "nats", os.Getenv("FVSWEEP_NATS"), "")
	registerSecret(fs, &c.token, "token", "FVSWEEP_TOKEN")
	fs.StringVar(&c.user, "user", os.Getenv("FVSWEEP_USER"), "")
	fs.StringVar(&c.creds, "creds", os.Getenv("FVSWEEP_CREDS"), "")
	fs.StringVar(&c.nkey, "nkey", os.Getenv("FVSWEEP_NKEY"), "")
	fs.StringVar(&c.tls.Cert, "tls-cert", os.Getenv("FVSWEEP_TLS_CERT"), "")
	fs.StringVar(&c.tls.Key, "tls-key", os.Getenv("FVSWEEP_TLS_KEY"), "")
	fs.StringVar(&c.tls.CA, "tls-ca", os.Getenv("FVSWEEP_TLS_CA"), "")
	fs.StringVar(&c.logLevel, "log-level", "info", "")
	fs.BoolVar(&c.logJSON, "log-json", false, "")
}

// commonFlags document the flags of register. A command that runs a
// coordinator (serving) uses --tls-cert and --tls-key for its embedded
// server too; they are documented once, with both uses.
func commonFlags(serving bool) []flagDoc {
	token := "file whose first line is the secret for the NATS server, or with --user that user's password"
	if serving {
		token += "; for the embedded server the operator's secret, required to --listen beyond loopback"
	}
	token += ". --token T works too, with a warning: ps shows it"
	tlsCert := "client certificate, with --tls-key, if the server wants one"
	tlsCA := "CA that signed the server's certificate"
	if serving {
		tlsCert = "with the embedded server: its certificate (with --tls-key) to serve clients over TLS; with --nats: the client certificate, if the server wants one"
		tlsCA = "with the embedded server: clients must show a certificate this CA signed; with --nats: the CA that signed the server's certificate"
	}
	return []flagDoc{
		{"data", "DIR", "data directory: store, embedded NATS files, coordinator.url", "$FVSWEEP_DATA or ./" + datadir.Default},
		{"nats", "URL", "NATS server or cluster URL(s); a server named here that does not answer is an error", "$FVSWEEP_NATS"},
		{"token-file", "FILE", token, "$FVSWEEP_TOKEN_FILE, else $FVSWEEP_TOKEN"},
		{"user", "NAME", "NATS user: the role (operator, submitter, reader or worker) on a cluster set up from deploy/nats", "$FVSWEEP_USER"},
		{"creds", "FILE", "NATS credentials file", "$FVSWEEP_CREDS"},
		{"nkey", "FILE", "file with an nkey seed", "$FVSWEEP_NKEY"},
		{"tls-ca", "FILE", tlsCA, "$FVSWEEP_TLS_CA"},
		{"tls-cert", "FILE", tlsCert, "$FVSWEEP_TLS_CERT"},
		{"tls-key", "FILE", "the key of --tls-cert", "$FVSWEEP_TLS_KEY"},
		{"log-level", "LEVEL", "trace, debug, info, warn or error", "info"},
		{"log-json", "", "log JSON lines instead of text", ""},
	}
}

// logger returns the command's logger on stderr.
func (c *common) logger(name string) (hclog.Logger, error) {
	level := hclog.LevelFromString(c.logLevel)
	if level == hclog.NoLevel {
		return nil, fmt.Errorf("--log-level %q: want trace, debug, info, warn or error", c.logLevel)
	}
	return hclog.New(&hclog.LoggerOptions{Name: name, Level: level, JSONFormat: c.logJSON, Output: os.Stderr}), nil
}

// dialOptions are the connection settings from the flags of a connection
// acting for role; credentials and TLS settings join them here.
func (c *common) dialOptions(url, name string, role wire.Role) client.DialOptions {
	return client.DialOptions{URL: url, Name: name, Role: role, Token: c.token, User: c.user,
		CredsFile: c.creds, NKeyFile: c.nkey, TLS: c.tls}
}

// dir is the data directory, --data.
func (c *common) dir() datadir.Dir { return datadir.Dir(c.data) }

// coordinatorURL is --nats, else the URL a running coordinator wrote into
// the data directory, else "".
func (c *common) coordinatorURL() string { return c.dir().CoordinatorURL(c.nats) }

// clientOptions are the connection settings of a command that asks the
// running coordinator, acting for role (reader or submitter).
func (c *common) clientOptions(role wire.Role) client.DialOptions {
	return c.dialOptions(c.nats, "fvsweep client", role)
}

// open finds the data: the coordinator when one answers, otherwise the
// store in --data, read-only (see datadir.Open).
func (c *common) open(ctx context.Context, role wire.Role) (*datadir.Source, error) {
	return datadir.Open(ctx, c.dir(), c.clientOptions(role))
}

// openSweep reads sweep name from the coordinator or the store, for
// table, export, plot and report.
func openSweep(c *common, name string) (*sweepData, error) {
	sw, err := datadir.ReadSweep(context.Background(), c.dir(), c.clientOptions(wire.RoleReader), name)
	if err != nil {
		return nil, err
	}
	d := &sweepData{name: sw.Name, rows: sw.Rows, specFile: sw.SpecFile, spec: sw.Spec, studies: sw.Studies}
	if d.studies == nil {
		// A record written before the store kept the study settings, or
		// the coordinator's answer, which carries the spec alone: parse once.
		d.studies = spec.StoredSettings(d.specFile, d.spec)
	}
	return d, nil
}

// signals returns a context canceled on the first SIGINT or SIGTERM; a
// second one calls again (if not nil) and a third exits at once.
func signals(again func()) (context.Context, func()) { return signalsAt(again, nil) }

// signalsAt is signals, but a first signal for which atOnce (if not nil)
// is true calls again at once too, as a second one would.
func signalsAt(again func(), atOnce func(os.Signal) bool) (context.Context, func()) {
	ctx, cancel := context.WithCancel(context.Background())
	ch := make(chan os.Signal, 3)
	signal.Notify(ch, os.Interrupt, syscall.SIGTERM)
	go func() {
		n := 0
		for sig := range ch {
			n++
			if n == 1 && atOnce != nil && atOnce(sig) {
				n = 2
				cancel()
			}
			switch n {
			case 1:
				cancel()
			case 2:
				if again != nil {
					again()
				}
			default:
				os.Exit(130)
			}
		}
	}()
	return ctx, func() { signal.Stop(ch); cancel() }
}

// specLimits are the limits of c's command: its --job-limit and --mem-limit,
// or the defaults.
func (c *common) specLimits() spec.Limits {
	if c.lim.MaxJobs == 0 {
		return spec.DefaultLimits()
	}
	return c.lim
}

// loadSpec reads and checks a spec file against c's limits and programs.
func (c *common) loadSpec(path string) (*spec.Plan, error) {
	return spec.Load(path, c.specLimits(), c.progs...)
}

// maxSubmittedSolvers bounds the manifests one submission may carry.
const maxSubmittedSolvers = 64

// parseSpec is the coordinator's parser of submitted specs, with c's
// limits and the manifests sent with the spec.
func (c *common) parseSpec(file, src string, solvers []wire.ManifestText) (*spec.Plan, error) {
	if len(solvers) > maxSubmittedSolvers {
		return nil, fmt.Errorf("%d solver manifests: at most %d", len(solvers), maxSubmittedSolvers)
	}
	progs := make([]*manifest.Manifest, 0, len(solvers))
	for _, m := range solvers {
		if len(m.Source) > spec.MaxManifestBytes {
			return nil, fmt.Errorf("manifest %s: larger than %d bytes", m.File, spec.MaxManifestBytes)
		}
		pm, err := spec.ParseManifest(m.File, []byte(m.Source))
		if err != nil {
			return nil, err
		}
		progs = append(progs, pm)
	}
	return spec.LoadSource(file, []byte(src), c.specLimits(), progs...)
}
