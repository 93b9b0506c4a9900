// Package atomicfile replaces files so that a reader, or a process that
// starts after a crash, sees either the old contents or the complete new
// ones, never a mixture or a truncated file.
//
// Write puts the new bytes in a hidden temporary file in the destination's
// folder (so the rename below never crosses a file system), flushes and
// fsyncs it, gives it mode 0644, renames it over the destination and then
// fsyncs the folder so the rename itself survives a power loss. Any failure
// removes the temporary file and leaves the destination untouched. A process
// killed part way leaves at most one temporary file, whose name IsTemp
// recognises so that folder scans can skip it and clean-up can remove it.
//
// Errors begin "write <path>: " and wrap the underlying error; callers add
// their own package prefix.
//
// References:
//   - rename(2) in POSIX.1-2017 (IEEE Std 1003.1): rename within one file
//     system replaces the target atomically.
//   - fsync(2) in POSIX.1-2017 and the Linux man page fsync(2): syncing a
//     file does not sync the directory entry; the containing folder must
//     be synced too (Linux man page, "NOTES", from memory).
package atomicfile
