// Command trackgate is a regression gate for multi-object trackers; see
// doc.go for the manual.
package main

import (
	"flag"
	"fmt"
	"io"
	"log"
	"os"
	"sort"
)

// Exit codes shared by every subcommand.
const (
	exitPass    = 0 // everything passed
	exitFail    = 1 // a regression was found
	exitUsage   = 2 // bad usage, configuration or scenario
	exitTracker = 3 // the tracker itself faulted
)

// command is one subcommand. Each lives in its own file and registers itself
// from an init function with register.
type command struct {
	name    string
	usage   string // one line: "validate FILE..."
	summary string // one sentence for the command list
	// run parses args with its own FlagSet and returns the exit code.
	run func(args []string, stdout, stderr io.Writer) int
}

var commands = map[string]*command{}

func register(c *command) {
	if _, dup := commands[c.name]; dup {
		panic("trackgate: command registered twice: " + c.name)
	}
	commands[c.name] = c
}

// newFlags returns a FlagSet for c that prints its usage to stderr.
func newFlags(c *command, stderr io.Writer) *flag.FlagSet {
	fs := flag.NewFlagSet(c.name, flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprintf(stderr, "usage: trackgate %s\n\n%s\n", c.usage, c.summary)
		if hasFlags(fs) {
			fmt.Fprintln(stderr, "\nflags:")
			fs.PrintDefaults()
		}
	}
	return fs
}

func hasFlags(fs *flag.FlagSet) bool {
	n := 0
	fs.VisitAll(func(*flag.Flag) { n++ })
	return n > 0
}

// parseFlags parses args and reports the exit code to return when parsing
// failed or help was asked for (ok false).
func parseFlags(fs *flag.FlagSet, args []string) (code int, ok bool) {
	if err := fs.Parse(args); err != nil {
		if err == flag.ErrHelp {
			return exitPass, false
		}
		return exitUsage, false
	}
	return 0, true
}

func main() {
	log.SetFlags(0)
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

func run(args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 || args[0] == "-h" || args[0] == "-help" || args[0] == "--help" || args[0] == "help" {
		if len(args) == 2 && args[0] == "help" {
			if c, ok := commands[args[1]]; ok {
				return c.run([]string{"-h"}, stdout, stderr)
			}
		}
		printManual(stdout)
		if len(args) == 0 {
			return exitUsage
		}
		return exitPass
	}
	c, ok := commands[args[0]]
	if !ok {
		fmt.Fprintf(stderr, "trackgate: unknown command %q; run 'trackgate help'\n", args[0])
		return exitUsage
	}
	return c.run(args[1:], stdout, stderr)
}

func printManual(w io.Writer) {
	fmt.Fprint(w, manual)
	names := make([]string, 0, len(commands))
	for n := range commands {
		names = append(names, n)
	}
	sort.Strings(names)
	fmt.Fprintln(w, "\nCommands:")
	for _, n := range names {
		fmt.Fprintf(w, "  %-10s %s\n", n, commands[n].summary)
	}
}
