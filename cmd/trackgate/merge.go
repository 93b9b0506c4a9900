package main

import (
	"flag"
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
// runner.Judge, and writes the merged result atomically. The gates judged
// are the ones the shards recorded (result.Suite.Rules; the shards must
// agree); a --config given on the command line overrides them, with a
// note; shards that recorded none (results of an older trackgate) are
// judged with the gates of the project file, when there is one. Any
// unreadable file or failed merge check exits 2; otherwise the exit code
// is the merged result's (runner.ExitCode).
func runMerge(args []string, stdout, stderr io.Writer) int {
	c := commands["merge"]
	fs := newFlags(c, stderr)
	out := fs.String("o", "", "write the merged result to this file (replaced atomically); required")
	configFile := fs.String("config", config.FileName, "a project file whose gates replace the ones the shards recorded; without it the recorded gates are judged (a shard result that records none: this file's, if it exists)")
	verify := fs.Bool("verify-split", false, "also check that every run sits in the shard that trackgate's split (harness/shard) assigns it")
	files, code, ok := parseWithArgs(fs, args)
	if !ok {
		return code
	}
	configGiven := false
	fs.Visit(func(f *flag.Flag) { configGiven = configGiven || f.Name == "config" })
	fail := func(format string, a ...any) int {
		fmt.Fprintf(stderr, "trackgate merge: "+format+"\n", a...)
		return exitUsage
	}
	note := func(format string, a ...any) {
		fmt.Fprintf(stderr, "trackgate merge: note: "+format+"\n", a...)
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
	merged, err := result.Merge(suites...)
	if err != nil {
		return fail("%v (files in order: %v)", err, files)
	}
	var gates []config.Gate
	from := "the gates the shards recorded"
	switch {
	case configGiven:
		cfg, err := config.Load(*configFile)
		if err != nil {
			return fail("--config: %v", err)
		}
		if cfg.File == "" {
			return fail("--config: %s: no such project file", *configFile)
		}
		gates, from = cfg.Gates, *configFile
		if rec := merged.Rules; rec != nil && !rec.Equal(runner.RulesOf(gates)) {
			note("--config %s replaces the gates the shards were judged with (%s) by %s", *configFile, rec, runner.RulesOf(gates))
		}
	case merged.Rules != nil:
		gates = runner.GatesOf(merged.Rules)
	default:
		cfg, err := config.Load(*configFile)
		if err != nil {
			return fail("--config: %v", err)
		}
		if cfg.File == "" {
			note("the shards recorded no gates and there is no project file %s; the merged scenarios are judged without gates", *configFile)
		} else {
			note("the shards recorded no gates; judging the gates of %s", *configFile)
		}
		gates, from = cfg.Gates, *configFile
	}
	if err := runner.Judge(merged, config.Config{Gates: gates}); err != nil {
		return fail("%s: %v", from, err)
	}
	merged.Rules = runner.RulesOf(gates)
	if err := result.Write(*out, merged); err != nil {
		return fail("-o: %v", err)
	}
	runs := 0
	for _, sc := range merged.Scenarios {
		runs += len(sc.Runs)
	}
	fmt.Fprintf(stderr, "trackgate merge: %d results, %d scenarios, %d runs, %d gates, status %s -> %s\n", len(files), len(merged.Scenarios), runs, len(gates), merged.Status, *out)
	for _, n := range merged.Notes {
		note("%s", n)
	}
	return runner.ExitCode(merged.Status)
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
