package driver

import (
	"bufio"
	"context"
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"

	"trackgate/harness/protocol"
)

// The placeholders replaced in the argument vector in batch mode.
const (
	InputPlaceholder  = "{input}"
	OutputPlaceholder = "{output}"
)

// runBatch runs one job in batch mode.
func runBatch(ctx context.Context, cfg *Config, job *Job) Result {
	x := &exchange{job: job}
	fail := func(f *Fault) Result { x.res.Fault = f; return x.res }
	if err := ctx.Err(); err != nil {
		return fail(&Fault{Class: Canceled, Step: -1, Detail: err.Error()})
	}
	dir, err := os.MkdirTemp("", "trackgate-batch-")
	if err != nil {
		return fail(&Fault{Class: Harness, Step: -1, Detail: err.Error()})
	}
	defer os.RemoveAll(dir)
	inPath, outPath := filepath.Join(dir, "messages.jsonl"), filepath.Join(dir, "replies.jsonl")

	// Write every message, taping each line.
	in, err := os.Create(inPath)
	if err != nil {
		return fail(&Fault{Class: Harness, Step: -1, Detail: err.Error()})
	}
	bw := bufio.NewWriter(in)
	enc := protocol.NewEncoder(bw)
	werr := enc.Start(x.startMessage())
	if werr == nil {
		x.record(ToTracker, enc.Last())
		for i := range job.Run.Scans {
			if werr = enc.Scan(job.Run.Scans[i]); werr != nil {
				break
			}
			x.record(ToTracker, enc.Last())
		}
	}
	if werr == nil {
		werr = enc.Stop()
		x.record(ToTracker, enc.Last())
	}
	if werr == nil {
		werr = bw.Flush()
	}
	if cerr := in.Close(); werr == nil {
		werr = cerr
	}
	if werr != nil {
		return fail(&Fault{Class: Harness, Step: -1, Detail: "writing the message file: " + werr.Error()})
	}

	argv := make([]string, len(cfg.Argv))
	usesIn, usesOut := false, false
	for i, a := range cfg.Argv {
		usesIn = usesIn || strings.Contains(a, InputPlaceholder)
		usesOut = usesOut || strings.Contains(a, OutputPlaceholder)
		argv[i] = strings.ReplaceAll(strings.ReplaceAll(a, InputPlaceholder, inPath), OutputPlaceholder, outPath)
	}
	stdinPath, stdoutPath := inPath, outPath
	if usesIn {
		stdinPath = os.DevNull
	}
	if usesOut {
		stdoutPath = os.DevNull
	}
	stdin, err := os.Open(stdinPath)
	if err != nil {
		return fail(&Fault{Class: Harness, Step: -1, Detail: err.Error()})
	}
	stdout, err := os.OpenFile(stdoutPath, os.O_WRONLY|os.O_CREATE|os.O_TRUNC, 0o644)
	if err != nil {
		stdin.Close()
		return fail(&Fault{Class: Harness, Step: -1, Detail: err.Error()})
	}
	p, err := launch(cfg, argv, stdin, stdout)
	stdin.Close()
	stdout.Close()
	if err != nil {
		return fail(&Fault{Class: Launch, Step: -1, Detail: err.Error()})
	}
	runCtx, cancel := context.WithTimeout(ctx, cfg.runTimeout())
	defer cancel()
	var fault *Fault
	select {
	case <-p.exited:
		p.end(true)
		fault = p.exitFault(-1)
	case <-runCtx.Done():
		p.end(false)
		if ctx.Err() != nil {
			fault = &Fault{Class: Canceled, Step: -1, Detail: ctx.Err().Error()}
		} else {
			fault = &Fault{Class: Hang, Step: -1, Detail: "batch run still going after the run timeout of " + cfg.runTimeout().String()}
		}
	}
	x.res.Stderr = p.stderr.since(0)
	if fault != nil {
		fault.Stderr = lastLines(x.res.Stderr, 20, 4096)
		x.res.Fault = fault
	}

	// Read the replies back with the same checks as in a conversation.
	out, err := os.Open(outPath)
	if err != nil {
		if x.res.Fault == nil {
			x.res.Fault = &Fault{Class: MissingReply, Step: -1, Detail: "no reply file: " + err.Error()}
		}
		return x.res
	}
	defer out.Close()
	dec := protocol.NewDecoder(out, "tracker output", cfg.MaxLine)
	step := -1
	f, err := x.opening(dec)
	if err == nil && f == nil {
		for i := range job.Run.Scans {
			step = job.Run.Scans[i].Step
			if f, err = x.reply(dec, i); f != nil || err != nil {
				break
			}
		}
	}
	if f == nil && err != nil {
		detail := "reply file ended before every scan was answered"
		if !errors.Is(err, io.EOF) {
			detail = "reading the reply file: " + err.Error()
		}
		f = &Fault{Class: MissingReply, Step: step, Line: dec.Line(), Detail: detail}
		if step < 0 {
			f.Class = BadOpening
		}
	}
	if x.res.Fault == nil && f != nil {
		x.res.Fault = f
	}
	return x.res
}
