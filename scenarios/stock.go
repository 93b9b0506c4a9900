package scenarios

import "embed"

// Stock holds the stock scenario files (*.yaml), at its root.
//
//go:embed *.yaml
var Stock embed.FS
