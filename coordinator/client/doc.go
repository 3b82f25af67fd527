// Package client is how workers and commands reach a coordinator: Dial
// makes every NATS connection (tokens, credentials, nkeys, TLS) and Client
// sends the coordinator's requests (ping, status, rows, submit, cancel) and
// reads field snapshots.
package client
