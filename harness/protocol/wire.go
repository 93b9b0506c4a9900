package protocol

import "trackgate/harness/mot"

// Version is the protocol version this package speaks.
const Version = 1

// Message type names, the value of every message's "type" field.
const (
	TypeStart  = "start"  // harness → tracker: a run begins
	TypeScan   = "scan"   // harness → tracker: one scan
	TypeStop   = "stop"   // harness → tracker: the run is over
	TypeReady  = "ready"  // tracker → harness: answer to start
	TypeTracks = "tracks" // tracker → harness: answer to scan
)

// RunInfo names one run: which scenario, which Monte Carlo run, which seed.
type RunInfo struct {
	Scenario string
	// Hash is the scenario's content hash (hex SHA-256 of the file).
	Hash  string
	Index int
	Seed  uint64
	// Steps is the number of scans the run will have.
	Steps int
}

// Start opens a run: what the tracker needs to know before the first scan.
type Start struct {
	Run     RunInfo
	Model   mot.Model
	Objects []mot.Object
}

// Ready is the tracker's answer to Start.
type Ready struct {
	// Protocol is the protocol version the tracker speaks.
	Protocol int
	// Name and Version identify the tracker, for reports and golden files.
	Name, Version string
	// Covariance and Association say which optional track fields the
	// tracker reports; a tracker that declares one must send it on every
	// track.
	Covariance, Association bool
	// ManyRuns says the process can serve another run after "stop".
	ManyRuns bool
}

// Request is one decoded harness → tracker message; Type says which of the
// other fields is set.
type Request struct {
	Type  string
	Start Start    // when Type is TypeStart
	Scan  mot.Scan // when Type is TypeScan
}
