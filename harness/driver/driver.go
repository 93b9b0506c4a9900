package driver

import (
	"context"
	"errors"
	"os"
	"strconv"
	"sync"
	"sync/atomic"
	"syscall"
	"time"

	"trackgate/harness/mot"
	"trackgate/harness/protocol"
	"trackgate/harness/scenario"
)

// Config says how to run a tracker. The zero value of every field but Argv
// has a working default, named in its comment.
type Config struct {
	// Argv is the command and its arguments; Argv[0] is looked up in PATH
	// when it holds no slash.
	Argv []string
	// Env holds extra "NAME=value" entries added to the harness's own
	// environment.
	Env []string
	// Dir is the working directory ("" means the harness's own).
	Dir string
	// Batch selects batch mode (see the package documentation).
	Batch bool
	// ReplyTimeout bounds each reply to a scan (0 means 10 s).
	ReplyTimeout time.Duration
	// StartTimeout bounds the ready reply to each start message, which
	// may take longer than a scan's reply (a tracker loading its own
	// models); 0 means ReplyTimeout.
	StartTimeout time.Duration
	// RunTimeout bounds each run (0 means 10 min).
	RunTimeout time.Duration
	// Grace is the time a tracker gets to exit after its input is closed,
	// and after SIGTERM before SIGKILL (0 means 2 s).
	Grace time.Duration
	// MaxLine caps a reply line in bytes (0 means protocol.DefaultMaxLine).
	MaxLine int
	// StderrMax is the size of the standard error ring buffer (0 means
	// 64 KiB).
	StderrMax int
}

func orDefault(d, def time.Duration) time.Duration {
	if d <= 0 {
		return def
	}
	return d
}

func (c *Config) replyTimeout() time.Duration { return orDefault(c.ReplyTimeout, 10*time.Second) }
func (c *Config) startTimeout() time.Duration { return orDefault(c.StartTimeout, c.replyTimeout()) }
func (c *Config) runTimeout() time.Duration   { return orDefault(c.RunTimeout, 10*time.Minute) }
func (c *Config) grace() time.Duration        { return orDefault(c.Grace, 2*time.Second) }
func (c *Config) stderrMax() int {
	if c.StderrMax <= 0 {
		return 64 << 10
	}
	return c.StderrMax
}

// Job is one run to feed to a tracker.
type Job struct {
	// Scenario and Hash identify the scenario (name and content hash).
	Scenario, Hash string
	Model          mot.Model
	Objects        []mot.Object
	// Run is the simulated run; only its index, seed and scans are sent.
	Run mot.Run
}

// JobFor returns the job for one run of a loaded scenario.
func JobFor(spec *scenario.Spec, run mot.Run) Job {
	objs := make([]mot.Object, len(spec.Objects))
	for i, o := range spec.Objects {
		objs[i] = o.Object
	}
	return Job{Scenario: spec.Name, Hash: spec.Hash, Model: spec.Model, Objects: objs, Run: run}
}

// Direction says which way a taped message went.
type Direction uint8

// The two directions.
const (
	ToTracker Direction = iota + 1
	FromTracker
)

func (d Direction) String() string {
	if d == ToTracker {
		return "to tracker"
	}
	return "from tracker"
}

// Entry is one taped message line.
type Entry struct {
	Dir Direction
	// Line counts the lines of one direction from 1 at the start of the run.
	Line int
	// Raw is the line as sent or received, without its line end; extra
	// fields a tracker adds are kept here.
	Raw []byte
}

// Result is the outcome of one run.
type Result struct {
	// Tracker is the tracker's ready reply (zero if it never sent one).
	Tracker protocol.Ready
	// Frames holds one frame per answered scan, in step order; after a
	// fault, the frames answered before it.
	Frames []mot.Frame
	// Tape is every message exchanged, in order.
	Tape []Entry
	// Stderr is what the tracker wrote to standard error during the run
	// (the last StderrMax bytes).
	Stderr []byte
	// Fault is nil for a clean run.
	Fault *Fault
}

// Run feeds one job to a tracker started for it.
func Run(ctx context.Context, cfg Config, job Job) Result {
	return RunMany(ctx, cfg, []Job{job}, 1)[0]
}

// RunMany feeds every job to the tracker, with up to workers runs at the
// same time (workers < 1 means 1), and returns the results in job order.
// Each worker keeps a tracker that serves several runs for its next job;
// the results do not depend on the number of workers. Such a tracker's
// exit status after the worker's last run is not reported (no run is
// going on then).
func RunMany(ctx context.Context, cfg Config, jobs []Job, workers int) []Result {
	results := make([]Result, len(jobs))
	workers = max(1, min(workers, len(jobs)))
	var next atomic.Int64
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			var s *peer
			for {
				i := int(next.Add(1) - 1)
				if i >= len(jobs) {
					break
				}
				if cfg.Batch {
					results[i] = runBatch(ctx, &cfg, &jobs[i])
					continue
				}
				results[i], s = runConversation(ctx, &cfg, s, &jobs[i])
			}
			if s != nil {
				s.close()
			}
		}()
	}
	wg.Wait()
	return results
}

// onReply, when set (by benchmarks), is called after each reply has been
// read and checked in a conversation.
var onReply func()

// onRunEnd, when set (by tests), is called in a conversation after the stop
// message of job has been written, with the run's context.
var onRunEnd func(job *Job, runCtx context.Context)

// onHalt, when set (by tests), is called when a run's deadline has fired and
// halt starts: the moment after which the run's process is not reused.
var onHalt func()

// peer is a tracker process in conversation.
type peer struct {
	p      *proc
	in     *os.File // our end of its standard input
	out    *os.File // our end of its standard output
	enc    *protocol.Encoder
	dec    *protocol.Decoder
	ready  protocol.Ready
	mu     sync.Mutex // guards the deadlines against a concurrent cancel
	halted bool
}

func startPeer(cfg *Config) (*peer, error) {
	inR, inW, err := os.Pipe()
	if err != nil {
		return nil, err
	}
	outR, outW, err := os.Pipe()
	if err != nil {
		inR.Close()
		inW.Close()
		return nil, err
	}
	p, err := launch(cfg, cfg.Argv, inR, outW)
	inR.Close()
	outW.Close()
	if err != nil {
		inW.Close()
		outR.Close()
		return nil, err
	}
	return &peer{p: p, in: inW, out: outR, enc: protocol.NewEncoder(inW),
		dec: protocol.NewDecoder(outR, "tracker stdout", cfg.MaxLine)}, nil
}

// close ends a healthy conversation: input closed, a grace period to exit, then
// the group is ended.
func (s *peer) close() *Fault {
	s.in.Close()
	s.p.end(true)
	s.out.Close()
	return s.p.exitFault(0)
}

// kill ends a faulty conversation at once.
func (s *peer) kill() {
	s.in.Close()
	s.p.end(false)
	s.out.Close()
}

// deadline sets the read and write deadline for the next exchange unless
// the run has been halted.
func (s *peer) deadline(t time.Time) {
	s.mu.Lock()
	if !s.halted {
		s.out.SetReadDeadline(t)
		s.in.SetWriteDeadline(t)
	}
	s.mu.Unlock()
}

func (s *peer) halt() {
	if onHalt != nil {
		onHalt()
	}
	s.mu.Lock()
	s.halted = true
	past := time.Unix(1, 0)
	s.out.SetReadDeadline(past)
	s.in.SetWriteDeadline(past)
	s.mu.Unlock()
}

// exchange holds the state of one run that does not depend on the mode.
type exchange struct {
	job    *Job
	res    Result
	tape   tapeRec
	chk    checker
	frame  mot.Frame // reused decoding target
	tracks []mot.Estimate
}

type tapeRec struct {
	buf   []byte
	lines [3]int
}

func (x *exchange) record(dir Direction, raw []byte) {
	t := &x.tape
	if len(raw) > cap(t.buf)-len(t.buf) {
		t.buf = make([]byte, 0, max(64<<10, len(raw)))
	}
	n := len(t.buf)
	t.buf = append(t.buf, raw...)
	t.lines[dir]++
	x.res.Tape = append(x.res.Tape, Entry{Dir: dir, Line: t.lines[dir], Raw: t.buf[n:len(t.buf):len(t.buf)]})
}

func (x *exchange) startMessage() protocol.Start {
	j := x.job
	return protocol.Start{Run: protocol.RunInfo{Scenario: j.Scenario, Hash: j.Hash, Index: j.Run.Index,
		Seed: j.Run.Seed, Steps: len(j.Run.Scans)}, Model: j.Model, Objects: j.Objects}
}

// readFault classifies a decoding error (nil for errors that are not
// about the content: end of input and I/O errors).
func readFault(err error, step, line int, raw []byte, opening bool) *Fault {
	var pe *protocol.Error
	if !errors.As(err, &pe) {
		return nil
	}
	f := &Fault{Step: step, Line: line, Excerpt: excerpt(raw), Detail: pe.Error()}
	switch pe.Kind {
	case protocol.Syntax:
		f.Class = BadJSON
	case protocol.NonFinite:
		f.Class = NonFinite
	case protocol.TooLong:
		f.Class = LineTooLong
	default:
		f.Class = Malformed
	}
	if opening && f.Class != LineTooLong {
		f.Class = BadOpening
	}
	return f
}

// opening checks the ready reply in line.
func (x *exchange) opening(dec *protocol.Decoder) (*Fault, error) {
	r, err := dec.ReadReady()
	if raw := dec.Raw(); raw != nil {
		x.record(FromTracker, raw)
	}
	if err != nil {
		if f := readFault(err, -1, dec.Line(), dec.Raw(), true); f != nil {
			return f, nil
		}
		return nil, err
	}
	x.res.Tracker = r
	if r.Protocol != protocol.Version {
		return &Fault{Class: Version, Step: -1, Line: dec.Line(), Excerpt: excerpt(dec.Raw()),
			Detail: "tracker speaks protocol " + itoa(r.Protocol) + ", harness speaks " + itoa(protocol.Version)}, nil
	}
	x.chk.init(x.job.Model, r)
	return nil, nil
}

// reply reads and checks the answer to scan i.
func (x *exchange) reply(dec *protocol.Decoder, i int) (*Fault, error) {
	scan := &x.job.Run.Scans[i]
	err := dec.ReadTracks(&x.frame)
	if raw := dec.Raw(); raw != nil {
		x.record(FromTracker, raw)
	}
	if err != nil {
		if f := readFault(err, scan.Step, dec.Line(), dec.Raw(), false); f != nil {
			return f, nil
		}
		return nil, err
	}
	if f := x.chk.frame(scan, &x.frame); f != nil {
		f.Step, f.Line, f.Excerpt = scan.Step, dec.Line(), excerpt(dec.Raw())
		return f, nil
	}
	// Copy the tracks out of the reused frame into a shared arena.
	n := len(x.frame.Tracks)
	if n > cap(x.tracks)-len(x.tracks) {
		x.tracks = make([]mot.Estimate, 0, max(256, n))
	}
	k := len(x.tracks)
	x.tracks = append(x.tracks, x.frame.Tracks...)
	x.res.Frames = append(x.res.Frames, mot.Frame{Step: x.frame.Step, Tracks: x.tracks[k : k+n : k+n]})
	return nil, nil
}

func itoa(n int) string { return strconv.Itoa(n) }

// runConversation runs one job in conversation, reusing s when it is a
// tracker that serves several runs. It returns the tracker process to keep (nil
// when it was ended).
func runConversation(ctx context.Context, cfg *Config, s *peer, job *Job) (Result, *peer) {
	x := &exchange{job: job}
	x.res.Frames = make([]mot.Frame, 0, len(job.Run.Scans))
	x.res.Tape = make([]Entry, 0, 2*len(job.Run.Scans)+3)
	if err := ctx.Err(); err != nil {
		if s != nil {
			s.kill()
		}
		x.res.Fault = &Fault{Class: Canceled, Step: -1, Detail: err.Error()}
		return x.res, nil
	}
	fresh := s == nil
	if fresh {
		var err error
		if s, err = startPeer(cfg); err != nil {
			x.res.Fault = &Fault{Class: Launch, Step: -1, Detail: err.Error()}
			return x.res, nil
		}
	}
	s.dec.SetLine(0)
	mark := s.p.stderr.mark()
	runCtx, cancel := context.WithTimeout(ctx, cfg.runTimeout())
	defer cancel()
	s.mu.Lock()
	s.halted = false
	s.mu.Unlock()
	stopHalt := context.AfterFunc(runCtx, s.halt)
	runDeadline, _ := runCtx.Deadline()
	// waiting is the timeout of the exchange under way: StartTimeout for
	// the ready reply, ReplyTimeout for the replies to scans.
	waiting := cfg.startTimeout()
	arm := func() {
		t := time.Now().Add(waiting)
		if runDeadline.Before(t) {
			t = runDeadline
		}
		s.deadline(t)
	}

	// fail finishes the run with fault f, ending the process.
	fail := func(f *Fault) (Result, *peer) {
		stopHalt()
		s.kill()
		if ef := s.p.exitFault(f.Step); ef != nil && (f.Class == MissingReply || f.Class == Hang) {
			ef.Line = f.Line
			f = ef
		}
		if f.Class == Exited || f.Class == Crashed || f.Class == Hang || f.Class == MissingReply {
			f.Stderr = lastLines(s.p.stderr.since(mark), 20, 4096)
		}
		x.res.Stderr = s.p.stderr.since(mark)
		x.res.Fault = f
		return x.res, nil
	}
	// ioFault classifies an error of the pipe itself.
	ioFault := func(err error, step int) *Fault {
		line := s.dec.Line()
		if errors.Is(err, os.ErrDeadlineExceeded) {
			if ctx.Err() != nil {
				return &Fault{Class: Canceled, Step: step, Line: line, Detail: ctx.Err().Error()}
			}
			if runCtx.Err() != nil || !time.Now().Before(runDeadline) {
				return &Fault{Class: Hang, Step: step, Line: line, Detail: "run timeout of " + cfg.runTimeout().String() + " passed"}
			}
			return &Fault{Class: Hang, Step: step, Line: line, Detail: "no reply within " + waiting.String()}
		}
		// End of output or a broken pipe: did the tracker die?
		if s.p.waitExit(cfg.grace()) {
			if f := s.p.exitFault(step); f != nil {
				f.Line = line
				return f
			}
		}
		what := "tracker closed its output"
		if errors.Is(err, syscall.EPIPE) {
			what = "tracker closed its input"
		}
		if s.p.done() {
			what = "tracker exited with status 0"
		}
		return &Fault{Class: MissingReply, Step: step, Line: line, Detail: what + " before replying"}
	}

	arm()
	if err := s.enc.Start(x.startMessage()); err != nil {
		var nf *protocol.NonFiniteError
		var se *protocol.ShapeError
		if errors.As(err, &nf) || errors.As(err, &se) {
			return fail(&Fault{Class: Harness, Step: -1, Detail: err.Error()})
		}
		return fail(ioFault(err, -1))
	}
	x.record(ToTracker, s.enc.Last())
	if fresh {
		f, err := x.opening(s.dec)
		if err != nil {
			f = ioFault(err, -1)
			if f.Class == MissingReply {
				f.Class = BadOpening
				f.Detail = "no ready reply: " + f.Detail
			}
		}
		if f != nil {
			return fail(f)
		}
		s.ready = x.res.Tracker
	} else {
		// A tracker serving several runs answers every start with ready.
		f, err := x.opening(s.dec)
		if err != nil {
			f = ioFault(err, -1)
		}
		if f != nil {
			return fail(f)
		}
		s.ready = x.res.Tracker
	}
	waiting = cfg.replyTimeout()
	for i := range job.Run.Scans {
		arm()
		if err := s.enc.Scan(job.Run.Scans[i]); err != nil {
			var nf *protocol.NonFiniteError
			if errors.As(err, &nf) {
				return fail(&Fault{Class: Harness, Step: job.Run.Scans[i].Step, Detail: err.Error()})
			}
			return fail(ioFault(err, job.Run.Scans[i].Step))
		}
		x.record(ToTracker, s.enc.Last())
		f, err := x.reply(s.dec, i)
		if err != nil {
			f = ioFault(err, job.Run.Scans[i].Step)
		}
		if f != nil {
			return fail(f)
		}
		if onReply != nil {
			onReply()
		}
	}
	arm()
	if err := s.enc.Stop(); err != nil {
		return fail(ioFault(err, len(job.Run.Scans)))
	}
	x.record(ToTracker, s.enc.Last())
	if onRunEnd != nil {
		onRunEnd(job, runCtx)
	}
	// When the run deadline fired after the last reply, stopHalt returns
	// false and halt may still be running: it could mark the next run on
	// this process halted and set past deadlines after that run has
	// cleared them, a spurious hang. Such a process is not reused.
	halting := !stopHalt()
	s.deadline(time.Time{})
	if s.ready.ManyRuns && !halting {
		x.res.Stderr = s.p.stderr.since(mark)
		return x.res, s
	}
	if s.ready.ManyRuns {
		// The run itself is complete; its process just cannot serve the
		// next one, and its exit is not the run's concern.
		s.kill()
		x.res.Stderr = s.p.stderr.since(mark)
		return x.res, nil
	}
	if f := s.close(); f != nil {
		f.Step = len(job.Run.Scans)
		f.Stderr = lastLines(s.p.stderr.since(mark), 20, 4096)
		x.res.Fault = f
	}
	x.res.Stderr = s.p.stderr.since(mark)
	return x.res, nil
}
