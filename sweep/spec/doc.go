// Package spec reads a sweep spec in three stages: Parse reads the TOML and
// checks every key and value against the cases' parameters (errors name the
// file, line and key); Check resolves every run, estimates its cost and
// applies the job and memory limits, giving a Plan; Plan.Each and
// Plan.Expand give the jobs, largest first. Load and LoadSource do the
// first two at once.
package spec
