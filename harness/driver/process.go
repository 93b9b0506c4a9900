package driver

import (
	"errors"
	"os"
	"os/exec"
	"sync"
	"syscall"
	"time"
)

// ring keeps the last bytes written to it.
type ring struct {
	mu    sync.Mutex
	buf   []byte
	total int64 // bytes ever written
}

func newRing(size int) *ring { return &ring{buf: make([]byte, size)} }

func (r *ring) Write(p []byte) (int, error) {
	r.mu.Lock()
	defer r.mu.Unlock()
	n := len(p)
	if len(p) > len(r.buf) {
		r.total += int64(len(p) - len(r.buf))
		p = p[len(p)-len(r.buf):]
	}
	for len(p) > 0 {
		at := int(r.total % int64(len(r.buf)))
		c := copy(r.buf[at:], p)
		p = p[c:]
		r.total += int64(c)
	}
	return n, nil
}

// mark returns the count of bytes written so far.
func (r *ring) mark() int64 {
	r.mu.Lock()
	defer r.mu.Unlock()
	return r.total
}

// since returns the bytes written after mark m that are still held.
func (r *ring) since(m int64) []byte {
	r.mu.Lock()
	defer r.mu.Unlock()
	n := r.total - m
	if n > int64(len(r.buf)) {
		n = int64(len(r.buf))
	}
	out := make([]byte, n)
	start := r.total - n
	for i := range out {
		out[i] = r.buf[(start+int64(i))%int64(len(r.buf))]
	}
	return out
}

// onStart, when set (by tests), is called with the pid of every tracker
// process started; the pid is also its process group id.
var onStart func(pid int)

// proc is one running tracker process.
type proc struct {
	cmd        *exec.Cmd
	pid        int
	stderr     *ring
	stderrDone chan struct{}
	exited     chan struct{}
	state      *os.ProcessState
	grace      time.Duration
	killedByUs bool
}

// launch starts argv with the given standard input and output files (which
// it closes in the parent after the start) in a new process group.
func launch(cfg *Config, argv []string, stdin, stdout *os.File) (*proc, error) {
	if len(argv) == 0 {
		return nil, errors.New("empty argument vector")
	}
	cmd := exec.Command(argv[0], argv[1:]...)
	if cmd.Err != nil {
		return nil, cmd.Err
	}
	cmd.Dir = cfg.Dir
	cmd.Env = append(os.Environ(), cfg.Env...)
	cmd.SysProcAttr = &syscall.SysProcAttr{Setpgid: true}
	errR, errW, err := os.Pipe()
	if err != nil {
		return nil, err
	}
	cmd.Stdin, cmd.Stdout, cmd.Stderr = stdin, stdout, errW
	err = cmd.Start()
	errW.Close()
	if err != nil {
		errR.Close()
		return nil, err
	}
	p := &proc{cmd: cmd, pid: cmd.Process.Pid, stderr: newRing(cfg.stderrMax()), stderrDone: make(chan struct{}),
		exited: make(chan struct{}), grace: cfg.grace()}
	if onStart != nil {
		onStart(p.pid)
	}
	go func() {
		buf := make([]byte, 32<<10)
		for {
			n, err := errR.Read(buf)
			p.stderr.Write(buf[:n])
			if err != nil {
				break
			}
		}
		errR.Close()
		close(p.stderrDone)
	}()
	go func() {
		p.cmd.Wait()
		p.state = p.cmd.ProcessState
		close(p.exited)
	}()
	return p, nil
}

// done reports whether the process has exited (and been reaped).
func (p *proc) done() bool {
	select {
	case <-p.exited:
		return true
	default:
		return false
	}
}

// waitExit waits up to d for the process to exit.
func (p *proc) waitExit(d time.Duration) bool {
	select {
	case <-p.exited:
		return true
	default:
	}
	t := time.NewTimer(d)
	defer t.Stop()
	select {
	case <-p.exited:
		return true
	case <-t.C:
		return false
	}
}

// end makes sure the process and its whole group are gone and reaped. If
// patient, the process first gets one grace period to exit by itself (its
// input has been closed). Then the group gets SIGTERM, and SIGKILL after
// another grace period; the group is sent SIGKILL once more after the
// leader is reaped, for stragglers that ignore SIGTERM. Standard error is
// drained (bounded by a grace period, for a descendant that escaped the
// group).
func (p *proc) end(patient bool) {
	if !p.done() && (!patient || !p.waitExit(p.grace)) {
		p.killedByUs = true
		syscall.Kill(-p.pid, syscall.SIGTERM)
		if !p.waitExit(p.grace) {
			syscall.Kill(-p.pid, syscall.SIGKILL)
			<-p.exited
		}
	}
	// Kill what is left of the group. The group id cannot have been reused:
	// a process group lives as long as any member does, and a new process
	// only gets this id as a group leader of its own after pid reuse,
	// which needs the pid space to wrap around within this call (common
	// practice).
	syscall.Kill(-p.pid, syscall.SIGKILL)
	t := time.NewTimer(p.grace)
	defer t.Stop()
	select {
	case <-p.stderrDone:
	case <-t.C:
	}
}

// exitFault classifies how the process ended, or returns nil if it exited
// with status 0 or was ended by us. A process we ended is not blamed for
// how it went, whatever its status: a tracker that catches SIGTERM and
// exits non-zero would otherwise hide our own reason (a hang) behind an
// exit status.
func (p *proc) exitFault(step int) *Fault {
	if !p.done() || p.killedByUs {
		return nil
	}
	st := p.state
	if st == nil {
		return nil
	}
	if ws, ok := st.Sys().(syscall.WaitStatus); ok && ws.Signaled() {
		return &Fault{Class: Crashed, Step: step, Signal: ws.Signal().String(),
			Detail: "killed by signal " + ws.Signal().String()}
	}
	if c := st.ExitCode(); c != 0 {
		return &Fault{Class: Exited, Step: step, ExitCode: c, Detail: "exit status " + itoa(c)}
	}
	return nil
}
