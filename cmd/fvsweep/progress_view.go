package main

import (
	"fmt"
	"io"
	"sync"
	"time"

	"github.com/vbauerster/mpb/v8"
	"github.com/vbauerster/mpb/v8/decor"
)

// progressView shows a sweep's progress: show takes each new snapshot, end
// the last one (finished true when every job has an outcome, false on an
// interrupt).
type progressView interface {
	show(s snapshot)
	end(s snapshot, finished bool)
}

// lineView writes the plain progress line (snapshot.line) at most every
// `every` and at the end: what run prints when its output is not a
// terminal.
type lineView struct {
	out    io.Writer
	name   string
	every  time.Duration
	logged time.Time
}

func (v *lineView) show(s snapshot) {
	if time.Since(v.logged) < v.every {
		return
	}
	fmt.Fprintln(v.out, s.line(v.name))
	v.logged = time.Now()
}

func (v *lineView) end(s snapshot, _ bool) { fmt.Fprintln(v.out, s.line(v.name)) }

// barView draws one progress bar per study and one for the whole sweep on
// a terminal (github.com/vbauerster/mpb): a study's bar fills with its jobs
// that have an outcome and says its counts and speed; the sweep's fills
// with the share of the estimated work and says the time left.
type barView struct {
	p     *mpb.Progress
	bars  []*mpb.Bar // by study; nil for a study without jobs of its own
	sweep *mpb.Bar

	mu   sync.Mutex
	last snapshot
}

// workSteps is the resolution of the sweep's bar.
const workSteps = 1000

func newBarView(out io.Writer, name string, labels []string, s snapshot) *barView {
	v := &barView{p: mpb.New(mpb.WithOutput(out), mpb.WithWidth(24), mpb.WithRefreshRate(200*time.Millisecond)), last: s}
	width := len(name)
	for _, l := range labels {
		width = max(width, len(l))
	}
	label := func(l string) mpb.BarOption {
		return mpb.PrependDecorators(decor.Name(l, decor.WC{W: width + 1, C: decor.DindentRight}))
	}
	v.bars = make([]*mpb.Bar, len(labels))
	for i, l := range labels {
		if i >= len(s.studies) || s.studies[i].total == 0 {
			continue
		}
		i := i
		v.bars[i] = v.p.AddBar(int64(s.studies[i].total), label(l), mpb.AppendDecorators(decor.Any(func(decor.Statistics) string {
			v.mu.Lock()
			defer v.mu.Unlock()
			return studyText(v.last.studies[i])
		})))
	}
	v.sweep = v.p.AddBar(workSteps, label(name), mpb.AppendDecorators(decor.Any(func(decor.Statistics) string {
		v.mu.Lock()
		defer v.mu.Unlock()
		return sweepText(v.last)
	})))
	v.set(s)
	return v
}

// studyText is the text beside a study's bar:
// "12/40 done  0 failed  2 running  4.1M cell updates/s".
func studyText(c counts) string {
	t := fmt.Sprintf("%d/%d done  %d failed  %d running", c.done, c.total, c.failed, c.running)
	if r := c.rate(); r != "" {
		t += "  " + r
	}
	return t
}

// sweepText is the text beside the sweep's bar:
// "38% of the work  ~12 s left".
func sweepText(s snapshot) string {
	if s.sweep.finished() {
		return "finished after " + roughDuration(s.elapsed)
	}
	return fmt.Sprintf("%.0f%% of the work  %s", 100*s.sweep.workShare(), s.leftText())
}

func (v *barView) set(s snapshot) {
	v.mu.Lock()
	v.last = s
	v.mu.Unlock()
	for i, b := range v.bars {
		if b != nil && i < len(s.studies) {
			b.SetCurrent(int64(s.studies[i].done + s.studies[i].failed))
		}
	}
	if s.sweep.finished() {
		v.sweep.SetCurrent(workSteps)
	} else {
		v.sweep.SetCurrent(min(workSteps-1, int64(workSteps*s.sweep.workShare())))
	}
}

func (v *barView) show(s snapshot) { v.set(s) }

func (v *barView) end(s snapshot, _ bool) {
	v.set(s)
	// A bar that is not full (an interrupt) stays as it is drawn.
	for _, b := range append(v.bars, v.sweep) {
		if b != nil && !b.Completed() {
			b.Abort(false)
		}
	}
	v.p.Wait()
}
