// Package coordinator owns a sweep's life: it publishes jobs on NATS
// JetStream, collects results into the store and answers queries.
package coordinator
