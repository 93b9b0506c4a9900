package golden_test

import (
	"fmt"
	"os"
	"strings"

	"trackgate/harness/golden"
	"trackgate/harness/mot"
)

func ExampleMarshal() {
	h := golden.Header{Format: golden.FormatVersion, Kind: golden.Reference,
		Scenario: "harbour_approach", ScenarioHash: "5be1c0ffee", Run: 0, Seed: 81, Protocol: 1,
		Trackgate: "v0.1.0", Platform: golden.Platform{Go: "go1.26.8", OS: "linux", Arch: "arm64"}}
	f := golden.File{Header: h, Frames: []mot.Frame{{Step: 0, Tracks: []mot.Estimate{
		{Track: "pilot-boat", Mean: []float64{-1200.5, 0.1, 410, -0}, Detection: 7, HasDetection: true},
	}}}}
	b, err := golden.Marshal(f)
	if err != nil {
		fmt.Println(err)
		return
	}
	os.Stdout.Write(b)
	// Output:
	// {"golden":1,"kind":"reference","scenario":"harbour_approach","scenario_sha256":"5be1c0ffee","run":0,"seed":81,"protocol":1,"trackgate":"v0.1.0","go":"go1.26.8","goos":"linux","goarch":"arm64"}
	// {"step":0,"tracks":[{"track":"pilot-boat","mean":[-1200.5,0.1,410,0],"detection":7}]}
}

func ExampleRead() {
	src := `{"golden":1,"kind":"metrics","scenario":"harbour_approach","scenario_sha256":"5be1","run":0,"seed":81,"go":"go1.26.8","goos":"linux","goarch":"amd64"}
{"metric":"gospa_mean","value":"seven"}
`
	_, err := golden.Read(strings.NewReader(src), "golden/harbour_approach/run-0.metrics.jsonl")
	fmt.Println(err)
	// Output:
	// golden/harbour_approach/run-0.metrics.jsonl:2: expected a number, "NaN", "+Inf" or "-Inf", got "seven"
}

func ExamplePolicy_Decide() {
	p := golden.NewPolicy(golden.UpdateFailing, false, func(string) string { return "true" }) // CI=true
	fmt.Println(p.Decide(golden.Missing), p.Decide(golden.Passing))
	p = golden.NewPolicy(golden.UpdateFailing, false, func(string) string { return "" })
	fmt.Println(p.Decide(golden.Missing), p.Decide(golden.Passing))
	// Output:
	// fail keep
	// write keep
}
