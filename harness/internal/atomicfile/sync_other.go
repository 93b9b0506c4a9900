//go:build !unix

package atomicfile

// isUnsupportedSync treats every folder sync error as unsupported: on these
// systems (Windows) a folder cannot be opened for sync.
func isUnsupportedSync(error) bool { return true }
