package result

import _ "embed"

//go:embed schema.json
var schema []byte

// Schema returns the JSON Schema (draft 2020-12) of the result file written
// by Write, for layout Version. The caller may modify the returned slice.
func Schema() []byte { return append([]byte(nil), schema...) }
