package driver

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"os/exec"
	"os/signal"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"trackgate/harness/mot"
	"trackgate/harness/protocol"
)

// fakeEnv selects a fake tracker: the test binary re-runs itself with this
// variable set and becomes a small, deliberately faulty (or good) tracker.
const fakeEnv = "TRACKGATE_DRIVER_FAKE"

func TestMain(m *testing.M) {
	if mode := os.Getenv(fakeEnv); mode != "" {
		fakeTracker(mode, os.Args[1:])
		os.Exit(0)
	}
	os.Exit(m.Run())
}

// echoFrame answers a scan with one track per detection at Hᵀz, unit
// covariance, associated with its detection.
func echoFrame(m mot.Model, s mot.Scan) mot.Frame {
	f := mot.Frame{Step: s.Step}
	for _, d := range s.Detections {
		mean := make([]float64, m.StateDim)
		for i := 0; i < m.MeasDim; i++ {
			for j := 0; j < m.StateDim; j++ {
				mean[j] += m.H.At(i, j) * d.Z[i]
			}
		}
		f.Tracks = append(f.Tracks, mot.Estimate{Track: "d" + strconv.Itoa(d.ID), Mean: mean,
			Cov: mot.Identity(m.StateDim), Detection: d.ID, HasDetection: true})
	}
	return f
}

func fakeTracker(mode string, args []string) {
	if mode == "stubborn" {
		signal.Ignore(syscall.SIGTERM)
		fmt.Fprintln(os.Stderr, "stubborn grandchild running")
		time.Sleep(time.Hour)
		return
	}
	if mode == "doc" {
		fakeFromDocument()
		return
	}
	if strings.HasPrefix(mode, "batch") {
		fakeBatch(mode, args)
		return
	}
	if os.Getenv("TRACKGATE_DRIVER_FAKE_PWD") != "" {
		wd, _ := os.Getwd()
		fmt.Fprintln(os.Stderr, "working in", wd)
	}
	dec := protocol.NewDecoder(os.Stdin, "stdin", 0)
	w := bufio.NewWriter(os.Stdout)
	enc := protocol.NewEncoder(w)
	var model mot.Model
	raw := func(s string) {
		w.WriteString(s + "\n")
		w.Flush()
	}
	if mode == "ignore-term" {
		signal.Ignore(syscall.SIGTERM)
	}
	if mode == "term-exits-3" || mode == "linger-term-3" {
		// A tracker with its own SIGTERM handler that exits non-zero.
		term := make(chan os.Signal, 1)
		signal.Notify(term, syscall.SIGTERM)
		go func() {
			<-term
			fmt.Fprintln(os.Stderr, "caught SIGTERM, leaving with status 3")
			os.Exit(3)
		}()
	}
	for {
		req, err := dec.ReadRequest()
		if err == io.EOF {
			if mode == "exit-after" {
				os.Exit(5)
			}
			if mode == "linger-term-3" {
				// Does not leave at the end of its input: it is ended
				// by SIGTERM, which its handler answers with status 3.
				time.Sleep(time.Hour)
			}
			return
		}
		if err != nil {
			fmt.Fprintln(os.Stderr, "fake:", err)
			os.Exit(9)
		}
		switch req.Type {
		case protocol.TypeStart:
			model = req.Start.Model
			switch mode {
			case "no-ready":
				raw(`{"type":"tracks","step":0,"tracks":[]}`)
			case "version2":
				raw(`{"type":"ready","protocol":2,"tracker":"fake","version":"1"}`)
			case "silent":
				os.Exit(0)
			case "slow-start":
				time.Sleep(500 * time.Millisecond)
				enc.Ready(protocol.Ready{Name: "fake-slow-start", Version: "1", Covariance: true, Association: true})
				w.Flush()
			case "bench":
				enc.Ready(protocol.Ready{Name: "fake-bench", Version: "1", Association: true})
				w.Flush()
			default:
				enc.Ready(protocol.Ready{Name: "fake-" + mode, Version: "1", Covariance: true,
					Association: true, ManyRuns: mode == "many"})
				w.Flush()
			}
		case protocol.TypeStop:
		case protocol.TypeScan:
			s := req.Scan
			f := echoFrame(model, s)
			if s.Step == 1 {
				switch mode {
				case "exit-mid":
					fmt.Fprintln(os.Stderr, "warming up")
					fmt.Fprintln(os.Stderr, "fatal: ran out of beacons")
					os.Exit(3)
				case "signal-mid":
					syscall.Kill(os.Getpid(), syscall.SIGKILL)
					time.Sleep(time.Hour)
				case "hang", "ignore-term", "term-exits-3":
					fmt.Fprintln(os.Stderr, "thinking hard")
					time.Sleep(time.Hour)
				case "grandchild":
					c := exec.Command(os.Args[0])
					c.Env = append(os.Environ(), fakeEnv+"=stubborn")
					c.Stdout, c.Stderr = os.Stderr, os.Stderr
					c.Start()
					signal.Ignore(syscall.SIGTERM)
					time.Sleep(time.Hour)
				case "bad-utf8":
					raw("{\"type\":\"tracks\",\"step\":1,\"tracks\":[{\"id\":\"buoy-\xe9\",\"mean\":[0,0,0,0],\"detection\":null}]}")
					continue
				case "garbage":
					raw(`tracks: 2`)
					continue
				case "long":
					raw(`{"type":"tracks","step":1,"tracks":[],"pad":"` + strings.Repeat("x", 100<<10) + `"}`)
					continue
				case "wrong-step":
					f.Step = 2
				case "nan":
					raw(`{"type":"tracks","step":1,"tracks":[{"id":"a","mean":[1,NaN,2,0],"cov":[[1,0,0,0],[0,1,0,0],[0,0,1,0],[0,0,0,1]],"detection":null}]}`)
					continue
				case "asym":
					f.Tracks[0].Cov.Set(0, 1, 0.5)
				case "negdef":
					f.Tracks[0].Cov.Set(0, 1, 2)
					f.Tracks[0].Cov.Set(1, 0, 2)
				case "short-mean":
					f.Tracks[1].Mean = f.Tracks[1].Mean[:3]
				case "ghost-det":
					f.Tracks[0].Detection = 999999
				case "twice-det":
					f.Tracks[1].Detection = f.Tracks[0].Detection
				case "dup-track":
					f.Tracks[1].Track = f.Tracks[0].Track
				case "no-cov":
					f.Tracks[0].Cov = mot.Mat{}
				case "close-out":
					os.Stdout.Close()
					time.Sleep(time.Hour)
				case "exit0":
					os.Exit(0)
				case "extra":
					raw(`{"type":"tracks","note":"kept on tape","step":1,"tracks":[]}`)
					continue
				}
			}
			if mode == "bench" {
				// About 500 bytes: six tracks without covariance.
				f.Tracks = f.Tracks[:min(6, len(f.Tracks))]
				for i := range f.Tracks {
					f.Tracks[i].Cov = mot.Mat{}
					f.Tracks[i].Track = "t" + strconv.Itoa(i)
				}
			}
			if mode == "slow" {
				time.Sleep(100 * time.Millisecond)
			}
			enc.Tracks(f)
			w.Flush()
		}
	}
}

// fakeBatch reads a message file and writes a reply file: args are the
// input and output paths (or "-" for standard input and output).
func fakeBatch(mode string, args []string) {
	if mode == "batch-crash" {
		fmt.Fprintln(os.Stderr, "cannot open sonar log")
		os.Exit(4)
	}
	if mode == "batch-hang" {
		time.Sleep(time.Hour)
	}
	in, out := io.Reader(os.Stdin), io.Writer(os.Stdout)
	if len(args) == 2 {
		fi, err := os.Open(args[0])
		if err != nil {
			os.Exit(7)
		}
		fo, err := os.Create(args[1])
		if err != nil {
			os.Exit(7)
		}
		defer fo.Close()
		in, out = fi, fo
	}
	dec := protocol.NewDecoder(in, "input", 0)
	w := bufio.NewWriter(out)
	defer w.Flush()
	enc := protocol.NewEncoder(w)
	var model mot.Model
	for {
		req, err := dec.ReadRequest()
		if err != nil {
			return
		}
		switch req.Type {
		case protocol.TypeStart:
			model = req.Start.Model
			enc.Ready(protocol.Ready{Name: "fake-batch", Version: "1", Covariance: true, Association: true})
		case protocol.TypeScan:
			if mode == "batch-short" && req.Scan.Step == 2 {
				return
			}
			enc.Tracks(echoFrame(model, req.Scan))
		}
	}
}

// exampleLines returns the lines of the example exchange in PROTOCOL.md
// with the given prefix ("harness> " or "tracker> ").
func exampleLines(prefix string) []string {
	b, err := os.ReadFile("../PROTOCOL.md")
	if err != nil {
		return nil
	}
	var out []string
	for _, l := range strings.Split(string(b), "\n") {
		if strings.HasPrefix(l, prefix) {
			out = append(out, strings.TrimPrefix(l, prefix))
		}
	}
	return out
}

// fakeFromDocument replays the tracker side of the example exchange in
// PROTOCOL.md, one line per message that wants a reply.
func fakeFromDocument() {
	replies := exampleLines("tracker> ")
	dec := protocol.NewDecoder(os.Stdin, "stdin", 0)
	for {
		req, err := dec.ReadRequest()
		if err != nil {
			return
		}
		if req.Type == protocol.TypeStop {
			continue
		}
		if len(replies) == 0 {
			os.Exit(8)
		}
		fmt.Println(replies[0])
		replies = replies[1:]
	}
}
