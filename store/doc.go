// Package store keeps sweeps, jobs and results in a bbolt database. It is the
// only package that opens the database.
package store
