// Package spec reads a sweep spec: it parses the TOML (errors name the file,
// line and key), checks every run against the case vocabulary and the job
// and memory limits, and expands the studies into jobs, largest first.
package spec
