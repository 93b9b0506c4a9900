/*
Trackgate drives a multi-object tracker through declarative scenarios and
gates changes to it against a trusted reference tracker and blessed golden
files.

Usage:

	trackgate <command> [flags] [arguments]

Run 'trackgate help <command>' for the flags of one command.

Exit codes, shared by every command: 0 everything passed; 1 a regression was
found; 2 bad usage, configuration or scenario; 3 the tracker itself faulted.
*/
package main

// manual is the text printed by 'trackgate help'.
const manual = `Trackgate drives a multi-object tracker through declarative scenarios and
gates changes to it against a trusted reference tracker and blessed golden
files.

Usage:

	trackgate <command> [flags] [arguments]

Run 'trackgate help <command>' for the flags of one command.

Exit codes, shared by every command: 0 everything passed; 1 a regression was
found; 2 bad usage, configuration or scenario; 3 the tracker itself faulted.

The gate:

	trackgate check [--tracker CMD] [--against reference|golden|both] SCENARIO...
	trackgate bless [--tracker CMD] [--all] [--prune] SCENARIO...
	trackgate explain FILE --run N --step K [--tracker CMD]

check runs the tracker (the --tracker command line, split into words as a
POSIX shell would but with no shell and no expansion, or tracker.command of
trackgate.yaml) on every run of the scenarios and compares it with the
reference tracker (associations with their margins, one-step conformance,
track counts, identities) and with the golden files, then prints the report
and writes --json, --junit, --markdown and --html files. Its exit codes:
0 pass, ties allowed (a changed association where the reference's margin is
within tie_margin); 1 a regression; 2 bad usage, configuration or scenario,
or a stale golden (its scenario file changed since it was blessed); 3 the
tracker faulted, which outranks a regression. With CI=true or --ci nothing
is written into the golden folder and a missing golden fails.

bless records the goldens of the first runs of each scenario, rewriting only
those outside their tolerance unless --all is given. explain shows one step
as the reference sees it: predictions, detections, the gated cost matrix,
the best hypotheses and the margin, and what the tracker did there.
`
