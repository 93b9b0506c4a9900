package golden

import (
	"strconv"
	"strings"
)

// Mode is how goldens may be updated.
type Mode int

const (
	// Verify never writes: every mismatch, missing or stale golden fails.
	Verify Mode = iota
	// UpdateFailing writes only goldens that are missing, stale or fail
	// their tolerance; passing goldens keep their bytes, so last-bit
	// differences between machines never reach version control.
	UpdateFailing
	// UpdateAll rewrites every golden.
	UpdateAll
)

// Status is what a check found for one golden.
type Status int

const (
	// Passing: the golden exists, is fresh and agrees within tolerance.
	Passing Status = iota
	// Failing: the golden exists and is fresh, but the run disagrees.
	Failing
	// Missing: there is no golden file.
	Missing
	// Outdated: the golden is stale (its scenario changed) or foreign; it
	// was not compared.
	Outdated
)

// Action is what to do with one golden.
type Action int

const (
	// Keep leaves the golden as it is; the check passed.
	Keep Action = iota
	// Rewrite (re)writes the golden from the run.
	Rewrite
	// Fail writes nothing and counts as a failure.
	Fail
)

func (a Action) String() string {
	switch a {
	case Keep:
		return "keep"
	case Rewrite:
		return "write"
	case Fail:
		return "fail"
	}
	return "Action(" + strconv.Itoa(int(a)) + ")"
}

// Policy decides, golden by golden, whether to keep, write or fail.
type Policy struct {
	Mode Mode
	// CI forbids writing whatever the Mode: in CI a golden that is missing,
	// stale or failing is a failure.
	CI bool
}

// NewPolicy returns the policy for mode, with CI set when ciFlag is true or
// when the environment variable CI (read through getenv) is "true", "1" or
// "yes" in any case, as CI services set it.
func NewPolicy(mode Mode, ciFlag bool, getenv func(string) string) Policy {
	ci := ciFlag
	switch strings.ToLower(strings.TrimSpace(getenv("CI"))) {
	case "true", "1", "yes":
		ci = true
	}
	return Policy{Mode: mode, CI: ci}
}

// Decide returns the action for a golden in status s.
//
//	status    Verify  UpdateFailing  UpdateAll   (any mode with CI)
//	Passing   keep    keep           write       keep
//	Failing   fail    write          write       fail
//	Missing   fail    write          write       fail
//	Outdated  fail    write          write       fail
func (p Policy) Decide(s Status) Action {
	if s == Passing {
		if p.Mode == UpdateAll && !p.CI {
			return Rewrite
		}
		return Keep
	}
	if p.CI || p.Mode == Verify {
		return Fail
	}
	return Rewrite
}

// Apply carries out the policy for the golden at path whose check found
// status s: it writes f there atomically when the policy says Rewrite and
// touches nothing otherwise. It returns the action taken; Fail is a
// verdict, not an error. Errors are only for a write that failed.
func (p Policy) Apply(path string, s Status, f File) (Action, error) {
	a := p.Decide(s)
	if a != Rewrite {
		return a, nil
	}
	if err := Write(path, f); err != nil {
		return a, err
	}
	return a, nil
}
