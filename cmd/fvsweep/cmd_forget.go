package main

import (
	"context"
	"flag"
	"fmt"
	"math"
	"os"
	"os/user"

	"fvsweep/coordinator/datadir"
	"fvsweep/sweep/wire"
)

func init() {
	register(command{name: "forget", args: "SWEEP", run: runForget,
		summary: "discard stored outcomes so that they run again",
		about: `Discards stored outcomes of a sweep so that the next 'fvsweep submit' of its
spec runs those jobs again: one job (--job), the jobs of one study (--study
N, the N-th [[study]] of the spec, counted from 1), the failed ones
(--failed), or with none of these every outcome of the sweep. --study and
--failed may be combined. Outcomes are keyed by job ID: a job that another
sweep shares loses its outcome there too. The store keeps a record of each
forget: what, when and by whom. With no server named and no coordinator
running, the store in --data is changed directly (only when no coordinator
holds it); a server named with --nats that does not answer is an error.`,
		flags: flagSet([]flagDoc{
			{"job", "ID", "forget the outcome of this job only", ""},
			{"study", "N", "forget the outcomes of the N-th study (from 1)", ""},
			{"failed", "", "forget the failed outcomes", ""},
		}, commonFlags(false)),
		examples: []string{
			"fvsweep forget blast-limiters --failed",
			"fvsweep forget blast-limiters --study 2",
		}})
}

func runForget(args []string) int {
	fs := flag.NewFlagSet("forget", flag.ContinueOnError)
	var c common
	c.register(fs)
	jobID := fs.String("job", "", "")
	study := intFlag(fs, "study", 0, 1, math.MaxInt)
	failed := fs.Bool("failed", false, "")
	pos, code, done := parseCommand("forget", fs, args)
	if done {
		return code
	}
	if *jobID != "" && (*study > 0 || *failed) {
		return usageErr("forget", "--job picks one job: give it without --study or --failed")
	}
	req := wire.ForgetRequest{Sweep: pos[0], Job: *jobID, Failed: *failed, By: whoAmI()}
	if *study > 0 {
		req.Study, req.HasStudy = *study, true
	}
	rep, live, err := datadir.Forget(context.Background(), c.dir(), c.clientOptions(wire.RoleSubmitter), req)
	if err != nil {
		return fail("forget: %v", err)
	}
	where := "through the coordinator"
	if !live {
		where = "in " + c.dir().DB() + " (no coordinator running)"
	}
	fmt.Printf("sweep %s: %d %s forgotten %s; submit the spec again to rerun them\n",
		req.Sweep, rep.Forgotten, plural(rep.Forgotten, "outcome"), where)
	return 0
}

// whoAmI names the person or pipeline that runs the command: user@host.
func whoAmI() string {
	name := "unknown"
	if u, err := user.Current(); err == nil {
		name = u.Username
	}
	host, _ := os.Hostname()
	return name + "@" + host
}
