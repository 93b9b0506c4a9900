#!/usr/bin/env bash
# check-imports.sh: fail when a package of this module imports anything
# outside the allowed set.
#
#   non-test code: the standard library, trackgate/..., gonum.org/v1/gonum/...,
#                  go.yaml.in/yaml/v3
#   tests also:    github.com/stretchr/testify/..., github.com/google/go-cmp/...,
#                  github.com/santhosh-tekuri/jsonschema/...
#
# The YAML module is further confined to the readers of YAML files: only
# trackgate/harness/internal/yamlpos, trackgate/harness/scenario and
# trackgate/harness/config (and their tests) may import go.yaml.in/yaml/v3.
#
# Direct imports are checked (go list .Imports, .TestImports, .XTestImports),
# since the transitive dependencies of an allowed module are that module's
# business. The standard library is whatever `go list std` lists for the
# toolchain in use.
#
# Usage: ci/check-imports.sh [PACKAGES...]   (default ./...)
# Exit status: 0 clean, 1 a forbidden import was found, 2 go list failed.
set -euo pipefail

cd "$(dirname "$0")/.."
pkgs=("$@")
[ ${#pkgs[@]} -eq 0 ] && pkgs=(./...)

std=$(mktemp)
trap 'rm -f "$std"' EXIT
go list std >"$std" || exit 2

allowed_code='^(trackgate(/|$)|gonum\.org/v1/gonum(/|$)|go\.yaml\.in/yaml/v3(/|$))'
yaml_module='^go\.yaml\.in/yaml/v3(/|$)'
yaml_users='^trackgate/harness/(internal/yamlpos|scenario|config)$'
allowed_test='^(github\.com/stretchr/testify(/|$)|github\.com/google/go-cmp(/|$)|github\.com/santhosh-tekuri/jsonschema(/|$))'

# One line per import: "<kind> <package> <import>".
lines=$(go list -f '{{$p := .ImportPath}}{{range .Imports}}code {{$p}} {{.}}
{{end}}{{range .TestImports}}test {{$p}} {{.}}
{{end}}{{range .XTestImports}}test {{$p}} {{.}}
{{end}}' "${pkgs[@]}") || exit 2

bad=0
while read -r kind pkg imp; do
	[ -z "${imp:-}" ] && continue
	[ "$imp" = "C" ] && { echo "$pkg imports C (cgo is not allowed)"; bad=1; continue; }
	grep -qxF -- "$imp" "$std" && continue
	if [[ $imp =~ $yaml_module ]] && ! [[ $pkg =~ $yaml_users ]]; then
		echo "$pkg imports $imp; only harness/internal/yamlpos, harness/scenario and harness/config may read YAML"
		bad=1
		continue
	fi
	[[ $imp =~ $allowed_code ]] && continue
	if [ "$kind" = test ] && [[ $imp =~ $allowed_test ]]; then
		continue
	fi
	if [ "$kind" = test ]; then
		echo "$pkg: test imports $imp, which is not allowed"
	else
		echo "$pkg imports $imp, which is not allowed (tests may use testify, go-cmp and jsonschema; code may not)"
	fi
	bad=1
done <<<"$lines"

if [ $bad -ne 0 ]; then
	echo "check-imports: forbidden imports found; see the allowed list at the top of ci/check-imports.sh" >&2
	exit 1
fi
echo "check-imports: all imports allowed"
