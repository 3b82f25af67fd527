package main

import (
	"flag"
	"fmt"

	"fvsweep/coordinator/server"
)

func init() {
	register(command{name: "node", run: runNode,
		summary: "run a NATS server node of a cluster from a config file",
		about: `Runs one NATS server (with JetStream) from a NATS configuration file, for a
cluster of three such nodes: deploy/nats/node-1.conf, node-2.conf and
node-3.conf are ready-made ones. The secrets the configuration refers to
come from the environment (FVSWEEP_OPERATOR_TOKEN, FVSWEEP_SUBMIT_TOKEN,
FVSWEEP_READ_TOKEN, FVSWEEP_WORKER_TOKEN for deploy/nats; the server
refuses to start without them), and with FVSWEEP_ROUTE_TOKEN set the
routes between the nodes authenticate with it. A node that serves clients
beyond loopback must have users or tokens configured. SIGINT or SIGTERM
stops it.`,
		flags: []flagDoc{
			{"config", "FILE", "the NATS configuration file (required)", ""},
		},
		examples: []string{
			"fvsweep node --config deploy/nats/node-1.conf",
		}})
}

func runNode(args []string) int {
	fs := flag.NewFlagSet("node", flag.ContinueOnError)
	config := fs.String("config", "", "")
	if _, code, done := parseCommand("node", fs, args); done {
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
