// Package yamlpos holds what the strict YAML readers of the harness share:
// positioned errors (file, line, column, field path, message), field path
// building, node descriptions for "expected X, found Y" messages, and
// spelling suggestions for unknown keys.
//
// It is internal to the harness: the scenario and project-file readers use
// it, and they are, with this package, the only importers of the YAML
// module (ci/check-imports.sh enforces this).
package yamlpos
