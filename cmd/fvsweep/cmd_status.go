package main

import (
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"fvsweep/coordinator/web"
	"io"
	"maps"
	"os"
	"slices"
	"strings"
	"text/tabwriter"
	"time"

	"fvsweep/sweep/wire"
)

func init() {
	register(command{name: "status", args: "[SWEEP]", run: runStatus,
		summary: "show the progress of sweeps and the live workers",
		about: `Shows the jobs of SWEEP (of every sweep without it): total, done, failed,
running and queued, and the live workers with their current jobs. It asks
the running coordinator, or reads the store in --data when no server is
named and none runs (then nothing is running and no workers are listed).
With --http it asks the JSON API of a coordinator's status page instead
(serve --http), which needs no NATS access.`,
		flags: flagSet([]flagDoc{
			{"json", "", `print JSON: with SWEEP one object (sweep, jobs_total, done, failed, running, queued, canceled, workers), else {"sweeps": [...], "workers": [...]}`, ""},
			{"http", "HOST:PORT", "ask the status page at this address (or http://HOST:PORT)", ""},
			{"http-token-file", "FILE", "its token", "$FVSWEEP_HTTP_TOKEN_FILE, $FVSWEEP_HTTP_TOKEN, else --token"},
		}, commonFlags(false)),
		examples: []string{
			"fvsweep status",
			"fvsweep status blast-limiters --json",
			"fvsweep status --http 127.0.0.1:8080",
		}})
}

func runStatus(args []string) int {
	fs := flag.NewFlagSet("status", flag.ContinueOnError)
	var c common
	c.register(fs)
	asJSON := fs.Bool("json", false, "")
	var wf webFlags
	wf.register(fs)
	pos, code, done := parseCommand("status", fs, args)
	if done {
		return code
	}
	name := ""
	if len(pos) == 1 {
		name = pos[0]
	}
	var (
		rep  wire.StatusReply
		live = true
		err  error
	)
	if wf.addr != "" {
		rep, err = pageStatus(wf.addr, wf.tokenFor(&c), name)
	} else {
		rep, live, err = storeStatus(&c, name)
	}
	if err != nil {
		return fail("status: %v", err)
	}
	if rep.Workers == nil {
		rep.Workers = []wire.WorkerReport{}
	}
	if *asJSON {
		var v any = rep
		if name != "" && len(rep.Sweeps) == 1 {
			v = web.SweepView{SweepStatus: rep.Sweeps[0], Workers: rep.Workers}
		}
		enc := json.NewEncoder(os.Stdout)
		enc.SetIndent("", "  ")
		if err := enc.Encode(v); err != nil {
			return fail("status: %v", err)
		}
		return 0
	}
	writeStatus(os.Stdout, rep, live)
	return 0
}

// storeStatus asks the running coordinator over NATS, or reads the store
// (live false).
func storeStatus(c *common, name string) (rep wire.StatusReply, live bool, err error) {
	src, err := c.open(context.Background(), wire.RoleReader)
	if err != nil {
		return rep, false, err
	}
	defer src.Close()
	rep, err = src.Status(context.Background(), name)
	return rep, src.Live(), err
}

// writeStatus prints the status as text tables.
func writeStatus(w io.Writer, rep wire.StatusReply, live bool) {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "sweep\tjobs\tdone\tfailed\trunning\tqueued\tstate\tupdated\t")
	for _, s := range rep.Sweeps {
		state := ""
		if s.Canceled {
			state = "canceled"
		} else if s.Done+s.Failed == s.JobsTotal {
			state = "complete"
		}
		fmt.Fprintf(tw, "%s\t%d\t%d\t%d\t%d\t%d\t%s\t%s\t\n", s.Sweep, s.JobsTotal, s.Done, s.Failed, s.Running, s.Queued,
			state, s.Updated.Local().Format("2006-01-02 15:04"))
	}
	tw.Flush()
	for _, s := range rep.Sweeps {
		for _, label := range slices.Sorted(maps.Keys(s.Waiting)) {
			fmt.Fprintf(w, "%s: %d queued %s waiting for a worker with %s (fvsweep worker --solver MANIFEST)\n",
				s.Sweep, s.Waiting[label], plural(s.Waiting[label], "job"), label)
		}
	}
	if !live {
		fmt.Fprintln(w, "\nno coordinator running: read from the store")
		return
	}
	if rep.RefusedResults > 0 {
		fmt.Fprintf(w, "\n%d result %s refused (forged, malformed or out of bounds; see the coordinator's log)\n",
			rep.RefusedResults, plural(int(rep.RefusedResults), "message"))
	}
	fmt.Fprintf(w, "\n%d live %s\n", len(rep.Workers), plural(len(rep.Workers), "worker"))
	if len(rep.Workers) == 0 {
		return
	}
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "worker\thost\tcores\tslots\tdone\tfailed\tbusy\tcurrent jobs")
	for _, r := range rep.Workers {
		cur := make([]string, len(r.Current))
		for i, j := range r.Current {
			cur[i] = fmt.Sprintf("%s/%s (%s%s)", j.Sweep, j.JobID[:min(8, len(j.JobID))], time.Since(j.Since).Round(time.Second), progressText(j.Progress))
		}
		if r.CurrentMore > 0 {
			cur = append(cur, fmt.Sprintf("and %d more", r.CurrentMore))
		}
		fmt.Fprintf(tw, "%s\t%s\t%d\t%d\t%d\t%d\t%.0f%%\t%s\n", r.ID, r.Host, r.Cores, r.Concurrency, r.Done, r.Failed,
			100*r.Busy, strings.Join(cur, " "))
	}
	tw.Flush()
	for _, r := range rep.Workers {
		if len(r.Solvers) > 0 {
			fmt.Fprintf(w, "%s offers fv2d, %s\n", r.ID, strings.Join(r.Solvers, ", "))
		}
	}
}

// plural returns noun, with an "s" unless n is 1.
func plural(n int, noun string) string {
	if n == 1 {
		return noun
	}
	return noun + "s"
}

// progressText is ", 37% of t_end" for a running job's reported fraction
// done (rounded down, so that 100% means finished); "" for none.
func progressText(p *float64) string {
	if p == nil {
		return ""
	}
	return fmt.Sprintf(", %d%% of t_end", int(100**p))
}
