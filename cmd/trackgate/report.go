package main

import (
	"bytes"
	"fmt"
	"io"
	"os"

	"trackgate/harness/report"
	"trackgate/harness/result"
	"trackgate/harness/runner"
)

func init() {
	register(&command{
		name:    "report",
		usage:   "report RESULT.json [-format terminal|json|junit|markdown|html] [-o FILE] [-colour auto|always|never] [-limit BYTES]",
		summary: "Render a saved result file for people or CI; the exit code follows the result's status.",
		run:     runReport,
	})
}

// reportFormats are the formats report writes.
var reportFormats = []string{"terminal", "json", "junit", "markdown", "html"}

// runReport reads a result file and renders it. Flags may come before or
// after the file. A bad flag or an unreadable result exits 2; otherwise
// the exit code is the result's (runner.ExitCode).
func runReport(args []string, stdout, stderr io.Writer) int {
	c := commands["report"]
	fs := newFlags(c, stderr)
	format := fs.String("format", "terminal", "output format: terminal, json, junit, markdown or html")
	out := fs.String("o", "", "write to this file (replaced atomically) instead of standard output")
	colour := fs.String("colour", "auto", "terminal colour: auto (when standard output is a terminal and NO_COLOR is unset), always or never")
	limit := fs.Int("limit", report.DefaultMarkdownLimit, "markdown: the most bytes to write; whole sections are dropped to fit")
	files, code, ok := parseWithArgs(fs, args)
	if !ok {
		return code
	}
	fail := func(format string, a ...any) int {
		fmt.Fprintf(stderr, "trackgate report: "+format+"\n", a...)
		return exitUsage
	}
	if len(files) != 1 {
		fs.Usage()
		return fail("expected one result file, got %d", len(files))
	}
	known := false
	for _, f := range reportFormats {
		known = known || f == *format
	}
	if !known {
		return fail("-format: expected one of terminal, json, junit, markdown, html; got %q", *format)
	}
	if *colour != "auto" && *colour != "always" && *colour != "never" {
		return fail("-colour: expected auto, always or never; got %q", *colour)
	}
	if *limit <= 0 {
		return fail("-limit: expected a positive number of bytes, got %d", *limit)
	}
	suite, err := result.Read(files[0])
	if err != nil {
		return fail("%v", err)
	}
	var buf bytes.Buffer
	switch *format {
	case "terminal":
		useColour := *colour == "always" || (*colour == "auto" && *out == "" && colourWanted(stdout, os.Getenv))
		err = report.Terminal(&buf, suite, report.TerminalOptions{Colour: useColour})
	case "json":
		var data []byte
		data, err = result.Marshal(suite)
		buf.Write(data)
	case "junit":
		err = report.JUnit(&buf, suite)
	case "markdown":
		err = report.Markdown(&buf, suite, report.MarkdownOptions{Limit: *limit})
	case "html":
		err = report.HTML(&buf, suite)
	}
	if err != nil {
		return fail("%s: rendering %s: %v", files[0], *format, err)
	}
	if *out == "" {
		if _, err := stdout.Write(buf.Bytes()); err != nil {
			return fail("writing the output: %v", err)
		}
	} else if err := result.WriteFile(*out, buf.Bytes()); err != nil {
		return fail("-o: %v", err)
	}
	return runner.ExitCode(suite.Status)
}

// colourWanted reports whether terminal colour suits w: w is a terminal
// (a character device) and NO_COLOR is unset or empty
// (https://no-color.org).
func colourWanted(w io.Writer, getenv func(string) string) bool {
	if getenv("NO_COLOR") != "" {
		return false
	}
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	fi, err := f.Stat()
	return err == nil && fi.Mode()&os.ModeCharDevice != 0
}
