package main

import (
	"io"
	"os"
	"sync"
	"time"

	"github.com/schollz/progressbar/v3"
	"golang.org/x/term"
)

// progDelay is how long a stage runs before its progress appears: shorter
// stages stay silent, so quick runs print nothing extra.
const progDelay = time.Second

// progTask is the progress display of one stage on stderr: nothing for the
// first second, then a spinner with the elapsed time, or, once the stage
// reports done and total counts, a bar with the rate and the time left.
// It is silent when stderr is not a terminal or with --quiet. Its methods
// are safe for concurrent use (libraries call back from their workers)
// and do nothing on a nil or silent task.
type progTask struct {
	mu          sync.Mutex
	w           io.Writer
	name        string
	bar         *progressbar.ProgressBar
	determinate bool
	timer       *time.Timer
	total, at   int64
	closed      bool
}

// progVisible reports whether progress may be drawn on the command's
// stderr: only on a terminal, and not with --quiet.
func progVisible(s *streams, quiet bool) bool {
	if quiet || s == nil {
		return false
	}
	f, ok := s.err.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}

// progStart begins a stage called name.
func progStart(s *streams, quiet bool, name string) *progTask {
	if !progVisible(s, quiet) {
		return nil
	}
	t := &progTask{w: s.err, name: name}
	t.timer = time.AfterFunc(progDelay, t.show)
	return t
}

// show draws the bar once the delay has passed.
func (t *progTask) show() {
	t.mu.Lock()
	defer t.mu.Unlock()
	if t.closed || t.bar != nil {
		return
	}
	t.newBar()
}

// newBar makes the spinner or, with a total, the bar. t.mu is held.
func (t *progTask) newBar() {
	opts := []progressbar.Option{
		progressbar.OptionSetWriter(t.w),
		progressbar.OptionSetDescription(t.name),
		progressbar.OptionSetElapsedTime(true),
		progressbar.OptionClearOnFinish(),
		progressbar.OptionThrottle(100 * time.Millisecond),
	}
	if t.total > 0 {
		t.determinate = true
		opts = append(opts, progressbar.OptionSetPredictTime(true), progressbar.OptionShowIts(), progressbar.OptionShowCount(),
			progressbar.OptionSetWidth(30), progressbar.OptionFullWidth())
		t.bar = progressbar.NewOptions64(t.total, opts...)
		_ = t.bar.Set64(t.at)
		return
	}
	opts = append(opts, progressbar.OptionSpinnerType(14), progressbar.OptionSetSpinnerChangeInterval(120*time.Millisecond))
	t.bar = progressbar.NewOptions64(-1, opts...)
	_ = t.bar.RenderBlank()
}

// progress records that done of total units are finished; it has the
// signature of the libraries' Progress callbacks.
func (t *progTask) progress(done, total int64) {
	if t == nil {
		return
	}
	t.mu.Lock()
	defer t.mu.Unlock()
	if t.closed {
		return
	}
	t.at, t.total = done, total
	if t.bar == nil {
		return // not shown yet; show picks the counts up
	}
	if !t.determinate && total > 0 {
		_ = t.bar.Exit()
		t.newBar()
		return
	}
	if t.determinate {
		if total != t.bar.GetMax64() {
			t.bar.ChangeMax64(total)
		}
		_ = t.bar.Set64(done)
	}
}

// done ends the stage and clears its line. Calling it twice is harmless.
func (t *progTask) done() {
	if t == nil {
		return
	}
	t.mu.Lock()
	defer t.mu.Unlock()
	if t.closed {
		return
	}
	t.closed = true
	if t.timer != nil {
		t.timer.Stop()
	}
	if t.bar != nil {
		_ = t.bar.Finish()
		_ = t.bar.Clear()
	}
}

// callback returns t.progress as a library callback, nil for a silent
// task so that the library skips the calls.
func (t *progTask) callback() func(done, total int64) {
	if t == nil {
		return nil
	}
	return t.progress
}
