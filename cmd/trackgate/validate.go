package main

import (
	"errors"
	"fmt"
	"io"

	"trackgate/harness/scenario"
)

func init() {
	register(&command{
		name:    "validate",
		usage:   "validate FILE...",
		summary: "Check scenario files and print every problem with its file, line, column and field.",
		run:     runValidate,
	})
}

// runValidate loads every file, prints each problem on its own line to
// stderr and exits 0 when all files are valid, 2 otherwise.
func runValidate(args []string, stdout, stderr io.Writer) int {
	c := commands["validate"]
	fs := newFlags(c, stderr)
	quiet := fs.Bool("q", false, "print nothing for valid files")
	if code, ok := parseFlags(fs, args); !ok {
		return code
	}
	if fs.NArg() == 0 {
		fmt.Fprintln(stderr, "trackgate validate: no scenario files given")
		fs.Usage()
		return exitUsage
	}
	code := exitPass
	for _, path := range fs.Args() {
		s, err := scenario.Load(path)
		if err != nil {
			code = exitUsage
			var list scenario.ErrorList
			if errors.As(err, &list) {
				for _, e := range list {
					fmt.Fprintln(stderr, e)
				}
			} else {
				fmt.Fprintf(stderr, "%s: %v\n", path, err)
			}
			continue
		}
		if !*quiet {
			fmt.Fprintf(stdout, "%s: ok (%s: %d objects, %d steps, %d runs)\n", path, s.Name, len(s.Objects), s.Steps, s.Runs)
		}
	}
	return code
}
