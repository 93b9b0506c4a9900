package protocol_test

import (
	"fmt"
	"os"
	"strings"

	"trackgate/harness/mot"
	"trackgate/harness/protocol"
)

// A scan of an invented quay lidar, as the harness sends it, and a
// tracker's reply read back; the reply holds a NaN as Python's json module
// writes it.
func Example() {
	enc := protocol.NewEncoder(os.Stdout)
	enc.Scan(mot.Scan{Step: 2, Time: 0.2, Detections: []mot.Detection{{ID: 5, Z: []float64{12.5, -3.25}}}})

	replies := `{"type":"tracks","step":2,"tracks":[{"id":4,"mean":[12.4,0.9,-3.2,0.1],"detection":5}]}
{"type":"tracks","step":3,"tracks":[{"id":4,"mean":[NaN,0.9,-3.2,0.1]}]}
`
	dec := protocol.NewDecoder(strings.NewReader(replies), "tracker stdout", 0)
	var f mot.Frame
	if err := dec.ReadTracks(&f); err == nil {
		t := f.Tracks[0]
		fmt.Printf("step %d: track %q at %v from detection %d\n", f.Step, t.Track, t.Mean, t.Detection)
	}
	fmt.Println(dec.ReadTracks(&f))
	// Output:
	// {"type":"scan","step":2,"time":0.2,"detections":[{"id":5,"z":[12.5,-3.25]}]}
	// step 2: track "4" at [12.4 0.9 -3.2 0.1] from detection 5
	// tracker stdout:2:53: tracks[0].mean[0]: non-finite number NaN
}
