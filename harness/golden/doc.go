// Package golden reads and writes the blessed files that trackgate compares
// runs against: scan tapes, reference tracker output, tracker output and
// metrics, and a tracker's whole-run values of every run of a scenario
// (run values), one JSON object per line behind a provenance header.
//
// # Format
//
// A golden file is UTF-8 text of JSON objects, one per line, each ending in
// "\n". Line 1 is the Header; every later line is a record of the header's
// kind. Keys appear in the fixed order this package writes them (tests pin
// it), so files diff line by line in review. Floats are written in the
// shortest decimal form that parses back to the same float64
// (strconv.FormatFloat(v, 'g', -1, 64)), −0 as -0; NaN and the infinities,
// which JSON numbers cannot hold, are written as the strings "NaN", "+Inf"
// and "-Inf". Readers accept CRLF line ends. golden/README.md at the
// repository root documents every key.
//
// # Staleness
//
// A golden whose recorded scenario hash differs from the current scenario's
// is stale: Freshness reports it as a typed result and callers never compare
// against it.
//
// # Writing
//
// WriteFile writes atomically: a hidden temporary file in the same folder,
// fsync, rename over the target, fsync of the folder. A crash or kill at any
// point leaves either the old file or the new one, never a mix. Policy
// decides whether a golden may be written at all (never in CI), and
// Policy.Apply writes only what it allows.
//
// # Layout
//
// Path and ParsePath map between an ID (scenario, tracker, run, kind) and a
// file under the golden root; Scan lists a root, Tree.Orphans finds goldens
// no scenario uses any more and Tree.Remove deletes them on request.
package golden
