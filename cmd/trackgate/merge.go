package main

import (
	"fmt"
	"io"

	"trackgate/harness/config"
	"trackgate/harness/result"
	"trackgate/harness/runner"
	"trackgate/harness/shard"
)

func init() {
	register(&command{
		name:    "merge",
		usage:   "merge -o OUT.json [--config FILE] SHARD.json... [-verify-split]",
		summary: "Combine the result files of shards into the result of the whole suite, judging the gates again on the merged runs; the exit code follows the merged status.",
		run:     runMerge,
	})
}

// runMerge reads shard results, merges them with result.Merge, summarises
// and gates every scenario whose runs are now all present with
// runner.Judge (the gates of the project file, which should be the one the
// shards ran with), and writes the merged result atomically. Any unreadable
// file or failed merge check exits 2; otherwise the exit code is the merged
// result's (statusExit).
func runMerge(args []string, stdout, stderr io.Writer) int {
	c := commands["merge"]
	fs := newFlags(c, stderr)
	out := fs.String("o", "", "write the merged result to this file (replaced atomically); required")
	configFile := fs.String("config", config.FileName, "the project file whose gates are judged on the merged runs; a missing file means no gates")
	verify := fs.Bool("verify-split", false, "also check that every run sits in the shard that trackgate's split (harness/shard) assigns it")
	var files []string
	for {
		if code, ok := parseFlags(fs, args); !ok {
			return code
		}
		if fs.NArg() == 0 {
			break
		}
		files = append(files, fs.Arg(0))
		args = fs.Args()[1:]
	}
	fail := func(format string, a ...any) int {
		fmt.Fprintf(stderr, "trackgate merge: "+format+"\n", a...)
		return exitUsage
	}
	if *out == "" {
		fs.Usage()
		return fail("-o: the merged result file is required")
	}
	if len(files) == 0 {
		fs.Usage()
		return fail("expected at least one shard result file")
	}
	suites := make([]*result.Suite, len(files))
	for i, f := range files {
		s, err := result.Read(f)
		if err != nil {
			return fail("%v", err)
		}
		suites[i] = s
		if *verify {
			if err := verifySplit(f, s); err != nil {
				return fail("%v", err)
			}
		}
	}
	cfg, err := config.Load(*configFile)
	if err != nil {
		return fail("--config: %v", err)
	}
	if cfg.File == "" {
		fmt.Fprintf(stderr, "trackgate merge: note: no project file %s; the merged scenarios are judged without gates\n", *configFile)
	}
	merged, err := result.Merge(suites...)
	if err != nil {
		return fail("%v (files in order: %v)", err, files)
	}
	if err := runner.Judge(merged, cfg); err != nil {
		return fail("%s: %v", *configFile, err)
	}
	if err := result.Write(*out, merged); err != nil {
		return fail("-o: %v", err)
	}
	runs := 0
	for _, sc := range merged.Scenarios {
		runs += len(sc.Runs)
	}
	fmt.Fprintf(stderr, "trackgate merge: %d results, %d scenarios, %d runs, status %s -> %s\n", len(files), len(merged.Scenarios), runs, merged.Status, *out)
	for _, n := range merged.Notes {
		fmt.Fprintf(stderr, "trackgate merge: note: %s\n", n)
	}
	return statusExit(merged.Status)
}

// verifySplit checks that every run of s belongs to s's shard under
// shard.Of.
func verifySplit(file string, s *result.Suite) error {
	spec := shard.All
	if s.Shard != nil {
		spec = shard.Spec{Index: s.Shard.Index, Total: s.Shard.Total, Scenarios: s.Shard.Scenarios}
	}
	if !spec.Valid() {
		return fmt.Errorf("%s: shard %d/%d is not valid", file, spec.Index, spec.Total)
	}
	for _, sc := range s.Scenarios {
		for _, r := range sc.Runs {
			if r.Index < 0 {
				return fmt.Errorf("%s: scenario %q: negative run index %d", file, sc.Name, r.Index)
			}
			if !spec.Holds(sc.Name, r.Index) {
				want := shard.Of(sc.Name, r.Index, spec.Total)
				if spec.Scenarios {
					want = shard.Of(sc.Name, 0, spec.Total)
				}
				return fmt.Errorf("%s: scenario %q run %d belongs to shard %d, the file is shard %d (0-based, of %d)", file, sc.Name, r.Index, want, spec.Index, spec.Total)
			}
		}
	}
	return nil
}
