package golden

import "fmt"

// Freshness says whether a golden may be compared with a run of the current
// scenario.
type Freshness int

const (
	// Fresh: the golden was made from the current scenario file.
	Fresh Freshness = iota
	// Stale: the scenario file changed since the golden was made; the
	// golden must be re-blessed, never compared.
	Stale
	// Foreign: the golden belongs to another scenario (a misplaced file).
	Foreign
)

func (f Freshness) String() string {
	switch f {
	case Fresh:
		return "fresh"
	case Stale:
		return "stale"
	case Foreign:
		return "foreign"
	}
	return fmt.Sprintf("Freshness(%d)", int(f))
}

// Check compares the header's scenario name and hash with the current
// scenario's.
func (h Header) Check(scenario, hash string) Freshness {
	switch {
	case h.Scenario != scenario:
		return Foreign
	case h.ScenarioHash != hash:
		return Stale
	}
	return Fresh
}
