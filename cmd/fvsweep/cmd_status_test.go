package main

import "testing"

// A running job's progress reads as a whole percentage of t_end, rounded
// down so that only a finished run reads 100%; none reads as nothing.
func TestProgressText(t *testing.T) {
	for _, c := range []struct {
		p    *float64
		want string
	}{{nil, ""}, {ptr(0.0), ", 0% of t_end"}, {ptr(0.379), ", 37% of t_end"}, {ptr(0.999), ", 99% of t_end"}, {ptr(1.0), ", 100% of t_end"}} {
		if got := progressText(c.p); got != c.want {
			t.Errorf("progressText(%v) = %q, want %q", c.p, got, c.want)
		}
	}
}

func ptr(f float64) *float64 { return &f }
