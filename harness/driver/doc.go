// Package driver runs a tracker under test as a subprocess and talks to it
// in the JSON-lines protocol of harness/protocol: it feeds it one run's
// scans, reads back one frame per scan, checks every reply and records the
// whole exchange.
//
// # Processes
//
// The tracker is started from an argument vector, with extra environment
// variables and a working directory, in its own process group. Whatever
// happens — a finished run, a fault, a timeout, a cancelled context — the
// driver ends the whole group: SIGTERM, then SIGKILL after a grace period,
// and reaps the tracker. A tracker that says in its ready reply that it
// serves several runs is kept for the next run of the same worker; any
// other is started once per run. Standard error is kept in a bounded ring
// buffer (the last 64 KiB by default).
//
// Timeouts bound every run: one per reply (the time from sending a
// message to the complete reply line; Config.StartTimeout for the ready
// reply to a start message, Config.ReplyTimeout for the reply to a scan)
// and one for the whole run, on top of the caller's context. A tracker
// ended by the harness (after a timeout, or when it stays after its input
// is closed) is never blamed for its exit status: the harness's own reason
// stands.
//
// # Batch mode
//
// For trackers that cannot converse, Config.Batch writes all of a run's
// messages to a file first and runs the command once. The placeholders
// {input} and {output} in the argument vector are replaced by the paths of
// the message file and the reply file; without {input} the messages come
// on standard input, without {output} the replies are read from standard
// output. Replies are checked exactly as in a conversation.
//
// # Faults
//
// A run ends at its first fault, a *Fault of one Class, carrying the step,
// the line of the tracker's output and an excerpt of it, and for a tracker
// that died its exit status or signal and the last lines of its standard
// error. Replies are checked for: the right step; finite numbers; a mean of
// length n; a covariance, when present, of size n×n, symmetric and positive
// semi-definite; detection ids that belong to the scan and are used by one
// track at most; track ids used once per frame.
//
// The covariance test is common practice: with s = max|Pᵢⱼ|, P is
// symmetric when |Pᵢⱼ − Pⱼᵢ| ≤ 1e-9·s for all i, j, and positive
// semi-definite when the Cholesky factorisation of P + 1e-9·n·s·I succeeds
// (a symmetric matrix is positive definite if and only if its Cholesky
// factorisation exists; the small shift admits singular but semi-definite
// matrices and round-off).
//
// References:
//
//	G. H. Golub, C. F. Van Loan, Matrix Computations, 4th ed., Johns Hopkins
//	University Press, 2013, §4.2 (Cholesky factorisation; Theorem 4.2.7).
//
// # Determinism
//
// RunMany returns the results in the order of the jobs, and a result does
// not depend on the number of workers: line numbers on the tape and in
// faults count from the start of each run (line 1 of the tracker side is
// the run's ready reply), also in a process that serves several runs.
// Standard error is the exception: a process serving several runs has one
// stream, and Result.Stderr holds what arrived while the run was going on.
package driver
