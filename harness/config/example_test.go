package config_test

import (
	"fmt"

	"trackgate/harness/config"
)

func ExampleParse() {
	src := []byte(`
tracker:
  command: [./bin/quay]
  timeouts: {step: quickly}
`)
	_, err := config.Parse("trackgate.yaml", src)
	fmt.Println(err)
	// Output:
	// trackgate.yaml:4:20: tracker.timeouts.step: expected a positive duration such as "2s" or "1m30s", got "quickly"
}

func ExampleConfig_For() {
	c, err := config.Parse("trackgate.yaml", []byte(`
tolerance: {profile: float32-port}
per_scenario:
  - match: "warehouse-*"
    tolerance: {mean: {abs: 0.05}}
`))
	if err != nil {
		fmt.Println(err)
		return
	}
	p, _ := c.For("warehouse-floor")
	fmt.Println(p.Name, p.Mean.Abs, p.Cov.Abs)
	// Output:
	// float32-port 0.05 0.125
}
