package main

import (
	"flag"
	"fmt"

	"fvsweep/coordinator/server"
)

const nodeUsage = `usage: fvsweep node --config FILE

Runs one NATS server (with JetStream) from a NATS configuration file, for a
cluster of three such nodes: deploy/nats/node-1.conf, node-2.conf and
node-3.conf are ready-made ones. The secrets the configuration refers to
come from the environment (FVSWEEP_OPERATOR_TOKEN, FVSWEEP_SUBMIT_TOKEN,
FVSWEEP_READ_TOKEN, FVSWEEP_WORKER_TOKEN for deploy/nats; the server
refuses to start without them), and with
FVSWEEP_ROUTE_TOKEN set the routes between the nodes authenticate with it.
A node that serves clients beyond loopback must have users or tokens
configured. SIGINT or SIGTERM stops it.

flags:
  --config FILE      the NATS configuration file
`

func init() {
	register(command{name: "node", summary: "run a NATS server node of a cluster from a config file", run: runNode})
}

func runNode(args []string) int {
	fs := flag.NewFlagSet("node", flag.ContinueOnError)
	config := fs.String("config", "", "")
	if _, code, done := parseCommand("node", nodeUsage, fs, args, func(n int) bool { return n == 0 }); done {
		return code
	}
	if *config == "" {
		return usageErr("node", "--config FILE is required")
	}
	s, err := server.StartNode(*config)
	if err != nil {
		return fail("node: %v", err)
	}
	ctx, release := signals(nil)
	defer release()
	fmt.Printf("node %s: clients on %s\n", s.Name(), s.ClientURL())
	<-ctx.Done()
	s.Shutdown()
	s.WaitForShutdown()
	return 0
}
