// Package faults holds the fault tests of fvsweep with real processes: the
// fvsweep binary is built once, and coordinators, workers and NATS nodes
// run as child processes on loopback with random ports, killed with SIGKILL,
// stopped with SIGSTOP, restarted on the same files. Each test counts the
// jobs expected, stored, stored twice and lost, and what ran more than once.
package faults
