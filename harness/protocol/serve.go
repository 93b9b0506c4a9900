package protocol

import (
	"bufio"
	"errors"
	"fmt"
	"io"

	"trackgate/harness/mot"
)

// StepFunc answers one scan of a run.
type StepFunc func(scan mot.Scan) (mot.Frame, error)

// Serve is the tracker side of the protocol: it reads messages from r and
// writes replies to w until r ends. For each start message it calls begin
// to get the run's StepFunc and answers with ready (Protocol set to
// Version); for each scan it answers with the StepFunc's frame. It returns
// nil at the end of input after a stop (or before any start), and an error
// naming the line for anything else: a malformed message, a start message
// that fails Validate (checked before begin is called and before ready is
// sent), a scan outside a run, an error from begin or step, or a failed
// write.
func Serve(r io.Reader, w io.Writer, ready Ready, begin func(Start) (StepFunc, error)) error {
	dec := NewDecoder(r, "stdin", 0)
	bw := bufio.NewWriterSize(w, 64<<10)
	enc := NewEncoder(bw)
	ready.Protocol = Version
	var step StepFunc
	for {
		req, err := dec.ReadRequest()
		if errors.Is(err, io.EOF) {
			if step != nil {
				return fmt.Errorf("stdin:%d: input ended inside a run, want a stop message", dec.Line())
			}
			return nil
		}
		if err != nil {
			return err
		}
		switch req.Type {
		case TypeStart:
			if step != nil {
				return fmt.Errorf("stdin:%d: start inside a run, want a stop message first", dec.Line())
			}
			if err = req.Start.Validate(); err != nil {
				return fmt.Errorf("stdin:%d: %w", dec.Line(), err)
			}
			if step, err = begin(req.Start); err != nil {
				return fmt.Errorf("stdin:%d: %w", dec.Line(), err)
			}
			if step == nil {
				return fmt.Errorf("stdin:%d: no tracker for the run", dec.Line())
			}
			err = enc.Ready(ready)
		case TypeScan:
			if step == nil {
				return fmt.Errorf("stdin:%d: scan outside a run, want a start message first", dec.Line())
			}
			var f mot.Frame
			if f, err = step(req.Scan); err != nil {
				return fmt.Errorf("stdin:%d: step %d: %w", dec.Line(), req.Scan.Step, err)
			}
			err = enc.Tracks(f)
		case TypeStop:
			step = nil
			continue
		}
		if err == nil {
			err = bw.Flush()
		}
		if err != nil {
			return err
		}
	}
}
