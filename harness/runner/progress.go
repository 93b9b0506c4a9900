package runner

import (
	"fmt"
	"io"
	"os"
	"sync"
	"time"
)

// ProgressLine keeps one line of a terminal up to date with the runs done
// and the time elapsed ("runs 120/400  0:42 elapsed"), rewriting it in place
// with a carriage return and an erase-line sequence, at most five times a
// second and always for the last run; Finish erases it. Its Update method
// is an Options.Progress. The line is for people watching a long suite:
// nothing of it reaches a result or report.
type ProgressLine struct {
	mu    sync.Mutex
	w     io.Writer
	now   func() time.Time
	start time.Time
	last  time.Time
	shown bool
}

// NewProgressLine returns a line written to w; now is the clock (nil means
// time.Now).
func NewProgressLine(w io.Writer, now func() time.Time) *ProgressLine {
	if now == nil {
		now = time.Now
	}
	return &ProgressLine{w: w, now: now, start: now()}
}

// Update shows done of total runs.
func (p *ProgressLine) Update(done, total int) {
	p.mu.Lock()
	defer p.mu.Unlock()
	t := p.now()
	if done < total && p.shown && t.Sub(p.last) < 200*time.Millisecond {
		return
	}
	p.last, p.shown = t, true
	fmt.Fprintf(p.w, "\r\x1b[Kruns %d/%d  %s elapsed", done, total, clock(t.Sub(p.start)))
}

// Finish erases the line; a nil p does nothing.
func (p *ProgressLine) Finish() {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.shown {
		fmt.Fprint(p.w, "\r\x1b[K")
		p.shown = false
	}
}

// clock writes a duration as m:ss or h:mm:ss, whole seconds.
func clock(d time.Duration) string {
	s := int(d / time.Second)
	if s >= 3600 {
		return fmt.Sprintf("%d:%02d:%02d", s/3600, s/60%60, s%60)
	}
	return fmt.Sprintf("%d:%02d", s/60, s%60)
}

// IsTerminal reports whether w is a terminal (a character device), where a
// progress line belongs.
func IsTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	fi, err := f.Stat()
	return err == nil && fi.Mode()&os.ModeCharDevice != 0
}
