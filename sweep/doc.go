// Package sweep turns a sweep spec into jobs and holds the convergence maths:
// observed orders, least-squares order fits and the grid convergence index.
// It is pure computation and imports nothing of NATS or bbolt.
package sweep
