package main

import (
	"flag"
	"fmt"
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

const serverUsage = `  --worker-token-file FILE
                     with the embedded server: the workers' secret, which may pull
                     jobs and send outcomes, snapshots and reports, nothing else
                     (default $FVSWEEP_WORKER_TOKEN_FILE, else $FVSWEEP_WORKER_TOKEN)
  --submit-token-file FILE
                     the submitters' secret: submit, cancel, forget and read
                     (default $FVSWEEP_SUBMIT_TOKEN_FILE, else $FVSWEEP_SUBMIT_TOKEN)
  --read-token-file FILE
                     the readers' secret: status, table, export, report, plots and
                     the status page (default $FVSWEEP_READ_TOKEN_FILE, else
                     $FVSWEEP_READ_TOKEN). Each role's secret needs --token and
                     differs from the others; --worker-token T, --submit-token T and
                     --read-token T work too, with a warning
  --tls-cert FILE, --tls-key FILE
                     with the embedded server: serve clients over TLS; --tls-ca
                     FILE then requires client certificates signed by that CA
  --replicas N       replicas of every stream and bucket: 1 on one server, 3 on
                     a three-node cluster (default 1, or $FVSWEEP_REPLICAS)
  --ack-wait D       how long a job may run without a heartbeat from its worker
                     before it goes to another (default 30s)
  --max-deliver N    deliveries of a job before it is recorded as failed (default 3)
`

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
	fs.IntVar(&f.replicas, "replicas", replicas, "")
	fs.DurationVar(&f.ackWait, "ack-wait", 30*time.Second, "")
	fs.IntVar(&f.maxDeliver, "max-deliver", 3, "")
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
