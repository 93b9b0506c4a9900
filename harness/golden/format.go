package golden

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"runtime/debug"
	"sort"
	"strconv"
	"unicode/utf8"

	"trackgate/harness/mot"
)

// FormatVersion is the golden format version this package writes and reads.
const FormatVersion = 1

// Kind says what a golden file records.
type Kind string

// The kinds of golden file.
const (
	// Tape: the simulated scans and ground truth of one run.
	Tape Kind = "tape"
	// Reference: the reference tracker's frames for one run.
	Reference Kind = "reference"
	// Output: a tracker's frames for one run.
	Output Kind = "output"
	// Metrics: metric values of one run.
	Metrics Kind = "metrics"
	// RunValues: a tracker's whole-run metric values for every run of a
	// scenario, one record per run (the header's run and seed are 0).
	RunValues Kind = "run-values"
)

// Valid reports whether k is one of the defined kinds.
func (k Kind) Valid() bool {
	switch k {
	case Tape, Reference, Output, Metrics, RunValues:
		return true
	}
	return false
}

// Platform records where a golden was produced.
type Platform struct {
	// Go is the Go release (runtime.Version()).
	Go string
	// OS and Arch are runtime.GOOS and runtime.GOARCH.
	OS, Arch string
	// AMD64 is the GOAMD64 level the binary was built for ("v1".."v4"),
	// "" on other architectures.
	AMD64 string
}

// ThisPlatform returns the platform of the running binary, reading the
// GOAMD64 level from the build information.
func ThisPlatform() Platform {
	p := Platform{Go: runtime.Version(), OS: runtime.GOOS, Arch: runtime.GOARCH}
	if bi, ok := debug.ReadBuildInfo(); ok {
		for _, s := range bi.Settings {
			if s.Key == "GOAMD64" {
				p.AMD64 = s.Value
			}
		}
	}
	if p.Arch == "amd64" && p.AMD64 == "" {
		p.AMD64 = "v1" // the default level when the build did not record one
	}
	return p
}

// Release is the version of this trackgate source tree. It is raised with
// every change to what trackgate records or how it judges.
const Release = "0.1.0"

// ModuleVersion names the trackgate that is running, for golden headers and
// results: the module version when the binary was built from a tagged
// module ("v0.1.0"); otherwise Release, followed by "+" and the first 12
// digits of the commit when the build recorded it (and "-dirty" when the
// tree had changes), or by "+devel" when it did not (a build with
// -buildvcs=false, or go run from a folder without version control).
func ModuleVersion() string {
	bi, ok := debug.ReadBuildInfo()
	if !ok {
		return Release + "+devel"
	}
	return versionOf(bi)
}

// versionOf is ModuleVersion for given build information.
func versionOf(bi *debug.BuildInfo) string {
	if v := bi.Main.Version; v != "" && v != "(devel)" {
		return v
	}
	var rev string
	dirty := false
	for _, s := range bi.Settings {
		switch s.Key {
		case "vcs.revision":
			rev = s.Value
		case "vcs.modified":
			dirty = s.Value == "true"
		}
	}
	if rev == "" {
		return Release + "+devel"
	}
	if len(rev) > 12 {
		rev = rev[:12]
	}
	if dirty {
		rev += "-dirty"
	}
	return Release + "+" + rev
}

// NewHeader returns the header of a golden written now by this binary: the
// format version, the trackgate module version and the platform are filled
// in from the build information.
func NewHeader(kind Kind, scenario, scenarioHash string, run int, seed uint64, protocol int) Header {
	return Header{Format: FormatVersion, Kind: kind, Scenario: scenario, ScenarioHash: scenarioHash,
		Run: run, Seed: seed, Protocol: protocol, Trackgate: ModuleVersion(), Platform: ThisPlatform()}
}

// Header is the first line of every golden file.
type Header struct {
	// Format is the golden format version (FormatVersion).
	Format int
	Kind   Kind
	// Scenario is the scenario name and ScenarioHash the hex SHA-256 of its
	// file (scenario.Spec.Hash).
	Scenario     string
	ScenarioHash string
	// Tracker names the tracker for Output and its Metrics; "" otherwise.
	Tracker string
	// Run is the run index and Seed the seed it was simulated from.
	Run  int
	Seed uint64
	// Protocol is the tracker protocol version (0 when no tracker ran).
	Protocol int
	// Trackgate is the version of trackgate that wrote the file.
	Trackgate string
	Platform  Platform
}

// Step is one record of a Tape: a scan and its ground truth.
type Step struct {
	Scan  mot.Scan
	Truth mot.Truth
}

// Metric is one record of a Metrics file.
type Metric struct {
	Name string
	// Step is the step the value belongs to, or −1 for a whole-run value.
	Step  int
	Value float64
}

// RunValue is one record of a RunValues file: the whole-run metric values
// of run Run, simulated from Seed.
type RunValue struct {
	Run    int
	Seed   uint64
	Values map[string]float64
}

// File is one golden file: the header and the records of its kind (only
// the slice matching Header.Kind is used).
type File struct {
	Header  Header
	Steps   []Step      // Tape
	Frames  []mot.Frame // Reference, Output
	Metrics []Metric    // Metrics
	Runs    []RunValue  // RunValues, runs increasing
}

// enc appends JSON to a buffer with keys in the order they are written.
type enc struct {
	b     []byte
	first []bool // per open object/array: no member yet
}

func (e *enc) sep() {
	if n := len(e.first); n > 0 {
		if !e.first[n-1] {
			e.b = append(e.b, ',')
		}
		e.first[n-1] = false
	}
}
func (e *enc) open(c byte)  { e.sep(); e.b = append(e.b, c); e.first = append(e.first, true) }
func (e *enc) close(c byte) { e.b = append(e.b, c); e.first = e.first[:len(e.first)-1] }
func (e *enc) key(k string) {
	e.sep()
	e.b = strconv.AppendQuote(e.b, k)
	e.b = append(e.b, ':')
	e.first = append(e.first, true) // the value that follows takes no comma
}
func (e *enc) val() { e.first = e.first[:len(e.first)-1] }

func (e *enc) str(k, v string) { e.key(k); e.b = appendString(e.b, v); e.val() }
func (e *enc) int(k string, v int64) {
	e.key(k)
	e.b = strconv.AppendInt(e.b, v, 10)
	e.val()
}
func (e *enc) uint(k string, v uint64) {
	e.key(k)
	e.b = strconv.AppendUint(e.b, v, 10)
	e.val()
}
func (e *enc) float(k string, v float64) { e.key(k); e.b = AppendFloat(e.b, v); e.val() }
func (e *enc) floats(k string, v []float64) {
	e.key(k)
	e.b = appendFloats(e.b, v)
	e.val()
}
func (e *enc) mat(k string, m mot.Mat) {
	e.key(k)
	e.b = append(e.b, '[')
	for i := 0; i < m.Rows; i++ {
		if i > 0 {
			e.b = append(e.b, ',')
		}
		e.b = appendFloats(e.b, m.Data[i*m.Cols:(i+1)*m.Cols])
	}
	e.b = append(e.b, ']')
	e.val()
}

func appendFloats(b []byte, v []float64) []byte {
	b = append(b, '[')
	for i, x := range v {
		if i > 0 {
			b = append(b, ',')
		}
		b = AppendFloat(b, x)
	}
	return append(b, ']')
}

// appendString appends s as a JSON string; invalid UTF-8 becomes U+FFFD.
func appendString(b []byte, s string) []byte {
	if !utf8.ValidString(s) {
		s = string([]rune(s))
	}
	b = append(b, '"')
	for _, r := range s {
		switch {
		case r == '"' || r == '\\':
			b = append(b, '\\', byte(r))
		case r < 0x20 || r == 0x2028 || r == 0x2029:
			b = fmt.Appendf(b, `\u%04x`, r)
		default:
			b = utf8.AppendRune(b, r)
		}
	}
	return append(b, '"')
}

// AppendFloat appends v in the golden form: the shortest decimal that parses
// back to v, or "NaN", "+Inf", "-Inf" as JSON strings.
func AppendFloat(b []byte, v float64) []byte {
	switch {
	case math.IsNaN(v):
		return append(b, `"NaN"`...)
	case math.IsInf(v, 1):
		return append(b, `"+Inf"`...)
	case math.IsInf(v, -1):
		return append(b, `"-Inf"`...)
	}
	return strconv.AppendFloat(b, v, 'g', -1, 64)
}

// appendHeader appends the header line (without newline).
func appendHeader(b []byte, h Header) []byte {
	e := enc{b: b}
	e.open('{')
	e.int("golden", int64(h.Format))
	e.str("kind", string(h.Kind))
	e.str("scenario", h.Scenario)
	e.str("scenario_sha256", h.ScenarioHash)
	if h.Tracker != "" {
		e.str("tracker", h.Tracker)
	}
	e.int("run", int64(h.Run))
	e.uint("seed", h.Seed)
	e.int("protocol", int64(h.Protocol))
	e.str("trackgate", h.Trackgate)
	e.str("go", h.Platform.Go)
	e.str("goos", h.Platform.OS)
	e.str("goarch", h.Platform.Arch)
	if h.Platform.AMD64 != "" {
		e.str("goamd64", h.Platform.AMD64)
	}
	e.close('}')
	return e.b
}

func appendStep(b []byte, s Step) []byte {
	e := enc{b: b}
	e.open('{')
	e.int("step", int64(s.Scan.Step))
	e.float("time", s.Scan.Time)
	e.key("detections")
	e.open('[')
	for _, d := range s.Scan.Detections {
		e.open('{')
		e.int("id", int64(d.ID))
		e.floats("z", d.Z)
		e.close('}')
	}
	e.close(']')
	e.val()
	e.key("truth")
	e.open('[')
	for _, o := range s.Truth.Objects {
		e.open('{')
		e.str("object", o.Object)
		e.floats("x", o.X)
		e.close('}')
	}
	e.close(']')
	e.val()
	e.key("origins")
	e.open('[')
	for _, o := range s.Truth.Origins {
		e.open('{')
		e.int("detection", int64(o.Detection))
		e.str("object", o.Object)
		e.close('}')
	}
	e.close(']')
	e.val()
	e.close('}')
	return e.b
}

func appendFrame(b []byte, f mot.Frame) []byte {
	e := enc{b: b}
	e.open('{')
	e.int("step", int64(f.Step))
	e.key("tracks")
	e.open('[')
	for _, t := range f.Tracks {
		e.open('{')
		e.str("track", t.Track)
		e.floats("mean", t.Mean)
		if t.Cov.Rows > 0 {
			e.mat("cov", t.Cov)
		}
		if t.HasDetection {
			e.int("detection", int64(t.Detection))
		}
		e.close('}')
	}
	e.close(']')
	e.val()
	e.close('}')
	return e.b
}

func appendMetric(b []byte, m Metric) []byte {
	e := enc{b: b}
	e.open('{')
	e.str("metric", m.Name)
	if m.Step >= 0 {
		e.int("step", int64(m.Step))
	}
	e.float("value", m.Value)
	e.close('}')
	return e.b
}

func appendRunValue(b []byte, r RunValue) []byte {
	e := enc{b: b}
	e.open('{')
	e.int("run", int64(r.Run))
	e.uint("seed", r.Seed)
	e.key("values")
	e.open('{')
	names := make([]string, 0, len(r.Values))
	for n := range r.Values {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		e.float(n, r.Values[n])
	}
	e.close('}')
	e.val()
	e.close('}')
	return e.b
}

// trackerFits returns a message when a tracker name does not fit the kind:
// Output and RunValues need one, Tape and Reference must not have one.
func trackerFits(k Kind, tracker string) string {
	switch {
	case k == Output && tracker == "":
		return "a tracker output golden needs a tracker name"
	case k == RunValues && tracker == "":
		return "a run values golden needs a tracker name"
	case (k == Tape || k == Reference) && tracker != "":
		return fmt.Sprintf("a %s golden has no tracker, got %q", k, tracker)
	}
	return ""
}

// Marshal returns f in the golden format. It reports an error when the
// header is incomplete, a record does not fit the kind, or a name is not
// valid UTF-8 (it would not survive the trip through JSON).
func Marshal(f File) ([]byte, error) {
	h := f.Header
	if h.Format != FormatVersion {
		return nil, fmt.Errorf("golden: header format %d, want %d", h.Format, FormatVersion)
	}
	if !h.Kind.Valid() {
		return nil, fmt.Errorf("golden: header kind %q is not one of tape, reference, output, metrics, run-values", h.Kind)
	}
	if h.Scenario == "" || h.ScenarioHash == "" {
		return nil, fmt.Errorf("golden: header needs a scenario name and hash")
	}
	if msg := trackerFits(h.Kind, h.Tracker); msg != "" {
		return nil, errors.New("golden: " + msg)
	}
	for _, s := range []string{h.Scenario, h.ScenarioHash, h.Tracker, h.Trackgate} {
		if !utf8.ValidString(s) {
			return nil, fmt.Errorf("golden: header text %q is not valid UTF-8", s)
		}
	}
	n := 0
	switch h.Kind {
	case Tape:
		n = len(f.Frames) + len(f.Metrics) + len(f.Runs)
	case Reference, Output:
		n = len(f.Steps) + len(f.Metrics) + len(f.Runs)
	case Metrics:
		n = len(f.Steps) + len(f.Frames) + len(f.Runs)
	case RunValues:
		n = len(f.Steps) + len(f.Frames) + len(f.Metrics)
	}
	if n > 0 {
		return nil, fmt.Errorf("golden: a %s file holds %d records of another kind", h.Kind, n)
	}
	for _, s := range f.Steps {
		for _, o := range s.Truth.Objects {
			if !utf8.ValidString(o.Object) {
				return nil, fmt.Errorf("golden: step %d: object id %q is not valid UTF-8", s.Scan.Step, o.Object)
			}
		}
		for _, o := range s.Truth.Origins {
			if !utf8.ValidString(o.Object) {
				return nil, fmt.Errorf("golden: step %d: object id %q is not valid UTF-8", s.Scan.Step, o.Object)
			}
		}
	}
	for _, m := range f.Metrics {
		if !utf8.ValidString(m.Name) {
			return nil, fmt.Errorf("golden: metric name %q is not valid UTF-8", m.Name)
		}
	}
	for i, r := range f.Runs {
		if r.Run < 0 || i > 0 && r.Run <= f.Runs[i-1].Run {
			return nil, fmt.Errorf("golden: run values record %d: run %d, want runs ≥ 0 increasing", i, r.Run)
		}
		for n := range r.Values {
			if n == "" || !utf8.ValidString(n) {
				return nil, fmt.Errorf("golden: run %d: metric name %q is empty or not valid UTF-8", r.Run, n)
			}
		}
	}
	for _, fr := range f.Frames {
		for _, t := range fr.Tracks {
			if !utf8.ValidString(t.Track) {
				return nil, fmt.Errorf("golden: step %d: track name %q is not valid UTF-8", fr.Step, t.Track)
			}
			if t.Cov.Rows*t.Cov.Cols != len(t.Cov.Data) {
				return nil, fmt.Errorf("golden: step %d track %q: covariance %d×%d holds %d values", fr.Step, t.Track, t.Cov.Rows, t.Cov.Cols, len(t.Cov.Data))
			}
		}
	}
	b := appendHeader(nil, h)
	b = append(b, '\n')
	for _, s := range f.Steps {
		b = append(appendStep(b, s), '\n')
	}
	for _, fr := range f.Frames {
		b = append(appendFrame(b, fr), '\n')
	}
	for _, m := range f.Metrics {
		b = append(appendMetric(b, m), '\n')
	}
	for _, r := range f.Runs {
		b = append(appendRunValue(b, r), '\n')
	}
	return b, nil
}
