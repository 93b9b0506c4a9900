/*
Trackgate drives a multi-object tracker through declarative scenarios and
gates changes to it against a trusted reference tracker and blessed golden
files.

Usage:

	trackgate <command> [flags] [arguments]

Run 'trackgate help <command>' for the flags of one command.

Exit codes, shared by every command: 0 everything passed; 1 a regression was
found; 2 bad usage, configuration or scenario; 3 the tracker itself faulted.
*/
package main

// manual is the text printed by 'trackgate help'.
const manual = `Trackgate drives a multi-object tracker through declarative scenarios and
gates changes to it against a trusted reference tracker and blessed golden
files.

Usage:

	trackgate <command> [flags] [arguments]

Run 'trackgate help <command>' for the flags of one command.

Exit codes, shared by every command: 0 everything passed; 1 a regression was
found; 2 bad usage, configuration or scenario; 3 the tracker itself faulted.
`
