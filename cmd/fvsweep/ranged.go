package main

// Integer and duration flags with the range they must fall in, and flags that take one
// of a few words: a value outside is refused when it is parsed, so every
// command reports it the same way (bad usage, exit 2).

import (
	"flag"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"time"
)

// ranged is a flag of type T that takes only values in [lo, hi]; hi at
// the largest value of T means no upper bound.
type ranged[T int | time.Duration] struct {
	p      *T
	lo, hi T
	open   bool                    // no upper bound
	parse  func(string) (T, error) // the value, or what it should look like
	format func(T) string
}

func (r ranged[T]) String() string {
	if r.p == nil {
		return ""
	}
	return r.format(*r.p)
}

func (r ranged[T]) Set(s string) error {
	v, err := r.parse(s)
	if err != nil {
		return err
	}
	if v < r.lo || (!r.open && v > r.hi) {
		if r.open {
			return fmt.Errorf("want at least %s", r.format(r.lo))
		}
		return fmt.Errorf("want %s to %s", r.format(r.lo), r.format(r.hi))
	}
	*r.p = v
	return nil
}

func parseInt(s string) (int, error) {
	n, err := strconv.Atoi(s)
	if err != nil {
		return 0, fmt.Errorf("not a whole number")
	}
	return n, nil
}

func parseDuration(s string) (time.Duration, error) {
	d, err := time.ParseDuration(s)
	if err != nil {
		return 0, fmt.Errorf("not a duration like 30s or 2m")
	}
	return d, nil
}

// intRange is an int flag value into p in [lo, hi] (hi math.MaxInt: no
// upper bound).
func intRange(p *int, lo, hi int) flag.Value {
	return ranged[int]{p, lo, hi, hi == math.MaxInt, parseInt, strconv.Itoa}
}

// intFlag defines an int flag with default def that takes only values in
// [lo, hi] (hi math.MaxInt: no upper bound). def itself may lie outside,
// as a marker for "not given".
func intFlag(fs *flag.FlagSet, name string, def, lo, hi int) *int {
	p := new(int)
	*p = def
	fs.Var(intRange(p, lo, hi), name, "")
	return p
}

// durationVar defines a duration flag into p that takes only values in
// [lo, hi] (hi math.MaxInt64: no upper bound).
func durationVar(fs *flag.FlagSet, p *time.Duration, name string, def, lo, hi time.Duration) {
	*p = def
	fs.Var(ranged[time.Duration]{p, lo, hi, hi == math.MaxInt64, parseDuration, time.Duration.String}, name, "")
}

// oneOf is a string flag that takes one of a few words.
type oneOf struct {
	p     *string
	words []string
}

func (o oneOf) String() string {
	if o.p == nil {
		return ""
	}
	return *o.p
}

func (o oneOf) Set(s string) error {
	if !slices.Contains(o.words, s) {
		return fmt.Errorf("want %s", orList(o.words))
	}
	*o.p = s
	return nil
}

// choiceFlag defines a string flag with default def that takes one of words.
func choiceFlag(fs *flag.FlagSet, name, def string, words ...string) *string {
	p := new(string)
	*p = def
	fs.Var(oneOf{p, words}, name, "")
	return p
}

// orList is "a, b or c".
func orList(words []string) string {
	if len(words) < 2 {
		return strings.Join(words, "")
	}
	return strings.Join(words[:len(words)-1], ", ") + " or " + words[len(words)-1]
}
