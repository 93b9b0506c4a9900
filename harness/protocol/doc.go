// Package protocol is the JSON-lines language the harness speaks with a
// tracker under test: the wire messages of protocol version 1, an encoder
// that writes them and a decoder that reads them back with line numbers.
//
// It contains no process code; harness/driver runs the tracker and uses this
// package to talk to it. The document harness/PROTOCOL.md is the tracker
// author's reference and the JSON Schemas in schema/ describe every message.
//
// # Messages
//
// The harness sends, one JSON object per line, a "start" message (run
// identity and model), one "scan" message per step and a "stop" message. The
// tracker answers "start" with a "ready" line and every "scan" with a
// "tracks" line. Every message carries its name in the field "type".
//
// # Numbers
//
// Floats are written in the shortest form that reads back to the same
// float64 (strconv.FormatFloat with precision −1), so an encode/decode round
// trip is exact. JSON has no NaN or infinities; the encoder refuses them and
// the decoder recognises the bare tokens NaN, Infinity and -Infinity (which
// Python's json module writes) as well as overflowing literals such as 1e999,
// and reports them as a NonFinite error naming the field, never as a syntax
// error.
//
// # Errors
//
// Every decoding error is an *Error carrying the source name, the line and
// column, the field path (tracks[2].mean[1]) and a Kind: Syntax (not JSON),
// Shape (JSON, but a field is missing or has the wrong type), NonFinite, or
// TooLong (a line over the size cap). A string holding invalid UTF-8 or an
// unpaired UTF-16 surrogate escape is a Syntax error naming the field:
// decoding it would replace the bad bytes with U+FFFD and could make two
// distinct track ids equal.
//
// # Start checks
//
// Start.Validate checks a decoded start message's model and objects
// (shapes, finite and positive (semi-)definite matrices, probability
// ranges, unique object ids); Serve calls it before it answers ready, so a
// tracker built on Serve refuses a run it cannot serve instead of failing
// at its first scan.
package protocol
