// Package scenarios is trackgate's stock scenario library, the YAML files of
// this folder, embedded in the program so that commands such as trackgate
// demo run it from any working directory without a checkout.
//
// The files themselves are the source of truth; README.md describes their
// format and what each one stresses. Package scenario loads them.
package scenarios
