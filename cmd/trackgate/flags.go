package main

import "flag"

// parseWithArgs parses flags that may come before, between or after the
// positional arguments, which it returns in order. When parsing stops
// (a bad flag, or -h) ok is false and code is the exit code.
func parseWithArgs(fs *flag.FlagSet, args []string) (pos []string, code int, ok bool) {
	for {
		if code, ok := parseFlags(fs, args); !ok {
			return nil, code, false
		}
		if fs.NArg() == 0 {
			return pos, 0, true
		}
		pos = append(pos, fs.Arg(0))
		args = fs.Args()[1:]
	}
}
