package driver

import (
	"strconv"
	"strings"
)

// Class is the kind of a tracker fault.
type Class int

// The fault classes.
const (
	// Launch: the tracker could not be started.
	Launch Class = iota + 1
	// Exited: the tracker exited with a non-zero status, mid-run or after it.
	Exited
	// Crashed: the tracker was ended by a signal it did not get from us.
	Crashed
	// Hang: no complete reply within the reply timeout or the run timeout.
	Hang
	// BadJSON: a reply line is not JSON.
	BadJSON
	// LineTooLong: a reply line is over the size cap.
	LineTooLong
	// Malformed: a reply is JSON but not the expected message (wrong
	// "type", missing or mistyped field, a declared optional field absent).
	Malformed
	// WrongStep: a reply names another step than the scan it answers.
	WrongStep
	// NonFinite: a reply holds NaN, an infinity or an overflowing number.
	NonFinite
	// BadCovariance: a covariance is not symmetric positive semi-definite.
	BadCovariance
	// Dimension: a mean or covariance has the wrong size.
	Dimension
	// UnknownDetection: a track names a detection that is not in the scan.
	UnknownDetection
	// DuplicateDetection: two tracks name the same detection.
	DuplicateDetection
	// DuplicateTrack: two tracks of one frame have the same id.
	DuplicateTrack
	// MissingReply: the tracker closed its output, or exited with status 0,
	// before answering every message.
	MissingReply
	// BadOpening: the first line is not a valid ready message.
	BadOpening
	// Version: the ready message names a protocol version we do not speak.
	Version
	// Canceled: the caller's context was cancelled.
	Canceled
	// Harness: the harness itself failed (a message it cannot encode, a
	// temporary file it cannot write).
	Harness
)

var classNames = [...]string{
	Launch: "launch failed", Exited: "exited", Crashed: "crashed", Hang: "hang",
	BadJSON: "invalid JSON", LineTooLong: "line too long", Malformed: "malformed reply",
	WrongStep: "wrong step", NonFinite: "non-finite number", BadCovariance: "bad covariance",
	Dimension: "dimension mismatch", UnknownDetection: "unknown detection",
	DuplicateDetection: "detection used twice", DuplicateTrack: "track id used twice",
	MissingReply: "missing reply", BadOpening: "bad opening reply",
	Version: "unsupported protocol version", Canceled: "canceled", Harness: "harness error",
}

func (c Class) String() string {
	if c > 0 && int(c) < len(classNames) {
		return classNames[c]
	}
	return "Class(" + strconv.Itoa(int(c)) + ")"
}

// Fault is a classified failure of the tracker in one run.
type Fault struct {
	Class Class
	// Step is the step whose scan was being answered; −1 for the opening
	// exchange, and the number of steps for a fault after the last reply.
	Step int
	// Line is the line of the tracker's output (from 1 at the run's ready
	// reply) where the fault was seen, or 0.
	Line int
	// Excerpt is the start of that line (at most 120 bytes).
	Excerpt string
	// Detail says what was wrong and what was expected.
	Detail string
	// ExitCode is the exit status (Exited) and Signal the signal name
	// (Crashed).
	ExitCode int
	Signal   string
	// Stderr is the end of the tracker's standard error (last 20 lines,
	// at most 4 KiB) when the tracker died or hung.
	Stderr string
}

func (f *Fault) Error() string {
	var b strings.Builder
	b.WriteString("tracker ")
	b.WriteString(f.Class.String())
	switch {
	case f.Step < 0:
		b.WriteString(" at the opening")
	default:
		b.WriteString(" at step ")
		b.WriteString(strconv.Itoa(f.Step))
	}
	if f.Line > 0 {
		b.WriteString(", output line ")
		b.WriteString(strconv.Itoa(f.Line))
	}
	if f.Detail != "" {
		b.WriteString(": ")
		b.WriteString(f.Detail)
	}
	if f.Excerpt != "" {
		b.WriteString("\n  line: ")
		b.WriteString(f.Excerpt)
	}
	if f.Stderr != "" {
		b.WriteString("\n  stderr:\n    ")
		b.WriteString(strings.ReplaceAll(strings.TrimRight(f.Stderr, "\n"), "\n", "\n    "))
	}
	return b.String()
}

func excerpt(b []byte) string {
	const max = 120
	if len(b) > max {
		return string(b[:max]) + "…"
	}
	return string(b)
}

// lastLines returns the last n lines of b, at most limit bytes.
func lastLines(b []byte, n, limit int) string {
	if len(b) > limit {
		b = b[len(b)-limit:]
	}
	end := len(b)
	if end > 0 && b[end-1] == '\n' {
		end--
	}
	cut := 0
	for i, k := end-1, 0; i >= 0; i-- {
		if b[i] == '\n' {
			k++
			if k == n {
				cut = i + 1
				break
			}
		}
	}
	return string(b[cut:end])
}
