module trackgate

go 1.26

require (
	github.com/google/go-cmp v0.7.0
	github.com/santhosh-tekuri/jsonschema/v6 v6.0.3
	go.yaml.in/yaml/v3 v3.0.6
	gonum.org/v1/gonum v0.17.0
)

require golang.org/x/text v0.23.0 // indirect
