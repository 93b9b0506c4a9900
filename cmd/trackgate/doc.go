// Code generated from manual.txt by TestManualIsDocComment -update; DO NOT EDIT.

/*
Trackgate drives a multi-object tracker through declarative scenarios and
gates changes to it against a trusted reference tracker and blessed golden
files.

Usage:

	trackgate <command> [flags] [arguments]

Run 'trackgate help <command>' for the flags of one command.

Exit codes, shared by every command: 0 everything passed (ties allowed); 1 a
regression was found; 2 bad usage or configuration (nothing ran), or, with no
tracker fault, a scenario that does not load, a stale golden or a check
trackgate could not make; 3 the tracker itself faulted on some run, which
outranks a regression and an error.

Scenarios:

	trackgate validate FILE...
	trackgate simulate FILE [--run N] [-o FILE]
	trackgate expect FILE [--run N] [-k N]

validate checks scenario files (scenarios/README.md is the format) and
prints every problem as file:line:col: field: message. simulate prints one
Monte Carlo run, its scans and its ground truth, as JSON lines; the same file
and run give the same bytes on every machine. expect prints the reference
tracker's record of a run, one JSON line per step: predicted and updated
states, the detection each object took, the hypothesis cost, the margin to
the second-best hypothesis, the probability of the best one and the NIS.

Trackers:

	trackgate reference [-k N] [-variant NAME]

reference serves the reference tracker over the tracker protocol
(harness/PROTOCOL.md) on standard input and output. With -variant it serves
a deliberately changed reference, the test bench of the gate itself.

The gate:

	trackgate check [--tracker CMD] [--against reference|golden|both] SCENARIO...
	trackgate bless [--tracker CMD] [--all] [--prune] SCENARIO...
	trackgate explain FILE --run N --step K [--tracker CMD]

check runs the tracker (the --tracker command line, split into words as a
POSIX shell would but with no shell and no expansion, or tracker.command of
trackgate.yaml) on every run of the scenarios and compares it with the
reference tracker (associations with their margins, one-step conformance,
track counts, identities) and with the golden files, computes GOSPA (and
its localisation, missed and false parts), OSPA, NEES, NIS, per-object RMSE
and identity metrics and judges the project's gates, then prints the report
and writes --json, --junit, --markdown and --html files. Its exit codes:
0 pass, ties allowed (a changed association where the reference's margin is
within tie_margin); 1 a regression; 2 bad usage, configuration or scenario,
or a stale golden (its scenario file changed since it was blessed); 3 the
tracker faulted on some run, which outranks a regression and an error. A
tracker that serves many runs gets a process of its own for each chunk of 16
consecutive runs of a scenario, whatever -j; --runs is at most 100000. With
CI=true or --ci nothing is written into the golden folder and a missing
golden fails.

bless records the goldens of the first runs of each scenario, and every
run's whole-run metric values for the paired gate, rewriting only those
outside their tolerance unless --all is given. explain shows one step
as the reference sees it: predictions, detections, the gated cost matrix,
the best hypotheses and the margin, and what the tracker did there.

Reports and large suites:

	trackgate report RESULT.json [-format terminal|json|junit|markdown|html] [-o FILE]
	trackgate check --shard K/N --shard-base 0|1 --json SHARD.json ...
	trackgate merge -o OUT.json SHARD.json...

report redraws a saved result in any format. --shard runs a stable share of
the (scenario, run) pairs, with the numbering base of the first shard always
stated; merge joins the shards' results into the result of the whole suite,
judging again the gates the shards recorded (--config FILE replaces them),
and checks that every run ran exactly once.

First steps:

	trackgate demo [-o DIR]

demo runs the stock scenarios against the reference tracker, which must
pass, and against a deliberately faulty variant, which must be caught, and
writes both reports as HTML and JSON into DIR (./trackgate-demo).
*/
package main

import _ "embed"

// manual is the text printed by 'trackgate help': manual.txt, which is also
// this package's doc comment.
//
//go:embed manual.txt
var manual string
