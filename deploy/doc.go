// Package deploy holds what runs fvsweep on a cluster: the NATS node
// configurations (nats/), the systemd units (systemd/), the environment
// file examples and add-worker.sh. Its tests check that those files work:
// the script against stand-in ssh and scp commands, the node files by
// parsing them with the NATS server's own configuration reader.
package deploy
