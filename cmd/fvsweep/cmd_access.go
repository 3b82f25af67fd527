package main

import (
	"flag"
	"fmt"
	"math"
	"os"
	"strconv"
	"time"

	"fvsweep/coordinator"
	"fvsweep/coordinator/server"
	"fvsweep/sweep/wire"
)

// serverFlags are the flags of the commands that run a coordinator (serve
// and run): who may use its embedded server and how its streams are made.
type serverFlags struct {
	workerToken, submitToken, readToken string
	replicas                            int
	ackWait                             time.Duration
	maxDeliver                          int
}

// serverDocs document the flags of serverFlags.
var serverDocs = []flagDoc{
	{"worker-token-file", "FILE", "with the embedded server: the workers' secret, which may pull jobs and send outcomes, snapshots and reports, nothing else", "$FVSWEEP_WORKER_TOKEN_FILE, else $FVSWEEP_WORKER_TOKEN"},
	{"submit-token-file", "FILE", "the submitters' secret: submit, cancel, forget and read", "$FVSWEEP_SUBMIT_TOKEN_FILE, else $FVSWEEP_SUBMIT_TOKEN"},
	{"read-token-file", "FILE", "the readers' secret: status, table, export, report, plots and the status page. Each role's secret needs --token-file and differs from the others; --worker-token T, --submit-token T and --read-token T work too, with a warning", "$FVSWEEP_READ_TOKEN_FILE, else $FVSWEEP_READ_TOKEN"},
	{"replicas", "N", "replicas of every stream and bucket, 1 to 5: 1 on one server, 3 on a three-node cluster", "1, or $FVSWEEP_REPLICAS"},
	{"ack-wait", "D", "how long a job may run without a heartbeat from its worker before it goes to another, at least 100ms", "30s"},
	{"max-deliver", "N", "deliveries of a job before it is recorded as failed", "3"},
}

// defaultServerFlags are the values register gives without flags.
func defaultServerFlags() *serverFlags {
	var f serverFlags
	f.register(flag.NewFlagSet("", flag.ContinueOnError))
	return &f
}

func (f *serverFlags) register(fs *flag.FlagSet) {
	replicas := 1
	if r, err := strconv.Atoi(os.Getenv("FVSWEEP_REPLICAS")); err == nil {
		replicas = r
	}
	registerSecret(fs, &f.workerToken, "worker-token", server.SecretEnv(wire.RoleWorker))
	registerSecret(fs, &f.submitToken, "submit-token", server.SecretEnv(wire.RoleSubmitter))
	registerSecret(fs, &f.readToken, "read-token", server.SecretEnv(wire.RoleReader))
	f.replicas = replicas
	fs.Var(intRange(&f.replicas, 1, 5), "replicas", "")
	durationVar(fs, &f.ackWait, "ack-wait", 30*time.Second, 100*time.Millisecond, math.MaxInt64)
	f.maxDeliver = 3
	fs.Var(intRange(&f.maxDeliver, 1, math.MaxInt), "max-deliver", "")
}

// check refuses values the server would refuse later, less clearly.
func (f *serverFlags) check() error {
	switch {
	case f.replicas < 1 || f.replicas > 5:
		return fmt.Errorf("--replicas %d: want 1 to 5 (JetStream's limit), and at most the cluster size", f.replicas)
	case f.ackWait < 100*time.Millisecond:
		return fmt.Errorf("--ack-wait %v: want at least 100ms", f.ackWait)
	case f.maxDeliver < 1:
		return fmt.Errorf("--max-deliver %d: want at least 1", f.maxDeliver)
	}
	return nil
}

func (f *serverFlags) delivery() coordinator.Delivery {
	return coordinator.Delivery{AckWait: f.ackWait, MaxDeliver: f.maxDeliver, Replicas: f.replicas}
}

// access is who may use the embedded server.
func (f *serverFlags) access(c *common) server.Access {
	return server.Access{Token: c.token, WorkerToken: f.workerToken, SubmitToken: f.submitToken,
		ReadToken: f.readToken, Names: wire.Names{}}
}
