// Package result holds the complete outcome of a trackgate run and reads and
// writes it as versioned JSON.
//
// The model (Suite, Scenario, Run, Check ...) carries data only; checking,
// metrics and rendering live in other packages. What follows describes the
// file format and the merge of shard results.
//
// # File format
//
// Write produces UTF-8 JSON, indented by two spaces, with object members in
// the order of the Go struct fields and a final newline. The same Suite always
// gives the same bytes: no maps are encoded and nothing depends on time or
// the environment.
//
// JSON has no NaN or infinities, so non-finite float64 values are written as
// the strings "NaN", "Infinity" and "-Infinity", the spelling of the
// Protocol Buffers proto3 JSON mapping; Read turns them back into the same
// values, so a Suite survives a round trip bit for bit (NaN payloads
// excepted). Every float field accepts them, and schema.json says so with
// its "real" definition. Strings that are not valid UTF-8 (a tracker's
// stderr, say) have each bad byte replaced by U+FFFD, as encoding/json does.
//
// Read checks the "version" member first and names a mismatch ("written by
// result version 2; this trackgate reads version 1"); other errors name the
// file, the line and column of a syntax error, or the path of the member
// that has the wrong type ("scenarios[1].runs[0].seed: expected an unsigned
// integer, got string"). Members this version does not know are ignored, so
// that files written by a later trackgate with added fields still read.
//
// The JSON Schema (draft 2020-12) of the file is schema.json, returned by
// Schema. Its $id carries the layout version.
//
// # Merging shards
//
// Merge combines the results of shards (see package trackgate/harness/shard)
// into the result an unsharded run would have given; see its doc comment for
// the rules and checks.
//
// References:
//   - Protocol Buffers, "ProtoJSON Format" (proto3 JSON mapping), float and
//     double values: "NaN", "Infinity", "-Infinity".
//   - JSON Schema Draft 2020-12, Core and Validation specifications (2022).
package result
