package scenario

import "trackgate/harness/internal/yamlpos"

// Error is one problem found in a scenario file, at a position: File is
// the file name as given to Load or Parse; Line and Col are 1-based (Col is
// 0 when only the line is known, as for YAML syntax errors, and both are 0
// for problems of the whole file); Path is the field path, such as
// "objects[1].prior.cov"; Msg says what is wrong and what was expected.
// Its Error method formats it as "file:line:col: path: message".
type Error = yamlpos.Error

// ErrorList is every problem found in one scenario file, sorted by position.
// It is the error type Load and Parse return.
type ErrorList yamlpos.ErrorList

// Error returns one line per error.
func (l ErrorList) Error() string { return yamlpos.ErrorList(l).Error() }

// sort orders the list by line, then column, keeping the order of errors
// found at the same position, and drops exact duplicates.
func (l ErrorList) sort() ErrorList {
	return ErrorList(yamlpos.ErrorList(l).Sort().Compact())
}
