// Package config reads trackgate.yaml, the project file at the root of a
// repository that uses trackgate: which tracker to run and how, which
// scenarios to run it on, where the goldens live, how closely numbers must
// agree, and which metric gates a run must pass.
//
// The file is strict YAML: an unknown key, a wrong type, a duplicate key, a
// YAML alias or a value out of range is an error that names the file, line,
// column and field path, e.g.
//
//	trackgate.yaml:7:5: tracker.timeouts.step: expected a positive duration such as "2s", got "soon"
//
// A missing file, an empty file and the zero Config all mean the defaults
// listed below. Relative paths are relative to the folder holding the file
// (see Config.Resolve).
//
// # The file
//
//	format: 1                      # project file format; 1 if left out
//
//	tracker:                       # the tracker under test; none: reference only
//	  name: quay-tracker           # folder name of its goldens; default "tracker"
//	  command: [./bin/quay, --jsonl]   # argument vector, no shell
//	  env: {QUAY_LOG: warn}        # added to trackgate's own environment
//	  dir: .                       # working folder; default the file's folder
//	  timeouts:
//	    start: 10s                 # to the handshake; default 10s
//	    step: 5s                   # per scan answered; default 5s
//	    run: 10m                   # per whole run; default 10m
//	  batch: false                 # true: send a whole run, then read all frames
//
//	scenarios: ["scenarios/*.yaml"]  # filepath.Match globs; default ["scenarios/*.yaml"]
//	golden_dir: golden             # default "golden"
//
//	tolerance:
//	  profile: float64-port        # bit-exact, float64-port (default) or float32-port
//	  mean:   {abs: 1e-6, rel: 1e-9, ulps: 4}   # any subset; replaces those fields
//	  cov:    {rel: 1e-8}
//	  metric: {abs: 1e-9}
//
//	tie_margin: 1e-9               # association cost margin below which a changed
//	                               # association is a tie, not a regression; default 0
//
//	per_scenario:                  # applied in order to scenarios whose name matches
//	  - match: "clutter-*"         # path.Match pattern on the scenario name
//	    tolerance: {mean: {abs: 1e-4}}
//	    tie_margin: 1e-6
//	    golden_runs: 5             # replaces golden_runs for these scenarios
//
//	golden_runs: 3                 # leading runs of each scenario with golden files; default 3
//
//	metrics:
//	  order: 2                     # GOSPA order p ≥ 1; default 2 (α is always 2)
//	  cutoff: 20                   # GOSPA cut-off c in metres, also the farthest a
//	                               # track may be from an object it follows; default 20
//
//	gates:                         # metric gates
//	  - metric: gospa              # metric name
//	    worse: higher              # higher (default) or lower
//	    limit: 12.5                # absolute: fails when the value is worse than this
//	  - metric: nees
//	    paired:                    # paired: the tracker against the reference over runs
//	      confidence: 0.95         # in (0, 1): one-sided confidence that the
//	                               # tracker is worse (a one-sided test at 1 − c)
//	      min_effect: 0.25         # smallest difference that counts, ≥ 0
//
// A per-scenario pattern must be able to match a scenario name (lower-case
// letters and digits in words joined by single '-', at most 64
// characters): "clutter_*" or "Harbour*" is an error, since no scenario can
// carry such a name. A pattern that is valid but matches none of the
// scenarios of a run is found with Config.UnusedOverrides.
//
// The default tolerance profile is float64-port: a tracker that implements
// the same algorithm as the reference in float64 on another machine passes;
// see compare.PortProfile for how its numbers were chosen.
package config
