// Package server runs the NATS servers fvsweep brings along: the embedded
// server of a coordinator (Start) and a cluster node from a configuration
// file (StartNode), with the rights each user gets on them.
package server
