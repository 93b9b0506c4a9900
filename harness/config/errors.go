package config

import "trackgate/harness/internal/yamlpos"

// Error is one problem in a project file: File names it; Line and Col are
// 1-based (0 when unknown); Path is the field path, such as
// "tracker.timeouts.step" or "gates[1].paired.confidence" ("" for the whole
// file); Msg says what is wrong and what was expected. Its Error method
// formats it as "file:line:col: path: message", leaving out unknown parts.
type Error = yamlpos.Error

// ErrorList is every problem found in one file, sorted by position. It is
// the error type Parse and Load return for bad content.
type ErrorList = yamlpos.ErrorList
