// Package worker pulls jobs from NATS JetStream, runs them with fv2d and
// publishes the results.
package worker
