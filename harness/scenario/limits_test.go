package scenario_test

import (
	"strings"
	"testing"

	"trackgate/harness/motion"
	"trackgate/harness/scenario"
	"trackgate/harness/sim"
)

// limitsBase is an invented coastal radar setting: a patrol boat in
// constant velocity (or a constant turn) with clutter over a 100 m × 40 m
// box (volume 4000 m²).
const limitsBase = `format: 1
name: coastal-limits
description: A patrol boat off a coastal radar at the edges of the limits.
seed: 3
steps: 4
interval: 2
motion:
  kind: constant-velocity
  axes: 2
  accel-noise: 0.5
sensor:
  noise: [4, 4]
detection-probability: 0.9
clutter:
  region: {min: [0, 0], max: [100, 40]}
  mean-count: 2
objects:
  - id: patrol
    prior: {mean: [10, 1, 10, 1], cov: [1, 1, 1, 1]}
`

// TestLimitsAgree runs boundary scenarios through scenario.Parse and
// sim.Prepare and demands that they agree: a scenario that loads can be
// simulated, and one the loader refuses would be refused by the
// simulator too. For the refused side, the simulator is given the base
// scenario with the same values set the way the loader would have set
// them (harness/motion's formulas, c = λ·V).
func TestLimitsAgree(t *testing.T) {
	cv := func(dt, q float64) func(*scenario.Spec) {
		return func(s *scenario.Spec) {
			s.Model.Interval, s.Motion.AccelNoise = dt, q
			s.Model.F, s.Model.Q = motion.ConstantVelocity(2, dt, q)
		}
	}
	ct := func(dt, omega, q float64) func(*scenario.Spec) {
		return func(s *scenario.Spec) {
			s.Model.Interval, s.Motion.Kind, s.Motion.TurnRate, s.Motion.AccelNoise = dt, scenario.ConstantTurn, omega, q
			s.Model.F, s.Model.Q = motion.ConstantTurn(dt, omega, q)
		}
	}
	clutter := func(c float64) func(*scenario.Spec) {
		return func(s *scenario.Spec) { s.Model.ClutterMean, s.Model.ClutterDensity = c, c/4000 }
	}
	turn := func(omega string) string {
		return strings.Replace(limitsBase, "kind: constant-velocity", "kind: constant-turn\n  turn-rate: "+omega, 1)
	}
	tests := []struct {
		name   string
		yaml   string
		mirror func(*scenario.Spec)
		want   string // "" when both accept; else the loader's error line prefix
	}{
		{"clutter at the cap", strings.Replace(limitsBase, "mean-count: 2", "mean-count: 1000000", 1), clutter(1e6), ""},
		{"clutter over the cap", strings.Replace(limitsBase, "mean-count: 2", "mean-count: 2000000", 1), clutter(2e6),
			"case.yaml:16:15: clutter.mean-count: 2e+06 is above the limit"},
		{"clutter just over the cap", strings.Replace(limitsBase, "mean-count: 2", "mean-count: 1000000.5", 1), clutter(1000000.5),
			"case.yaml:16:15: clutter.mean-count"},
		// 250 per m² over 4000 m² is 10⁶ clutter detections per scan.
		{"density at the cap", strings.Replace(limitsBase, "mean-count: 2", "density: 250", 1), clutter(1e6), ""},
		{"density over the cap", strings.Replace(limitsBase, "mean-count: 2", "density: 250.5", 1), clutter(1.002e6),
			"case.yaml:16:12: clutter.density: 250.5 × region volume 4000 gives 1.002e+06"},
		// Q₀₀ = q·(Δt²/2)²: finite for Δt = 1e77 (2.5e307·0.5), infinite
		// for Δt = 1e78 (Δt⁴/4 = 2.5e311).
		{"interval near the limit", strings.Replace(limitsBase, "interval: 2", "interval: 1e77", 1), cv(1e77, 0.5), ""},
		{"interval over the limit", strings.Replace(limitsBase, "interval: 2", "interval: 1e78", 1), cv(1e78, 0.5),
			"case.yaml:6:11: interval: 1e+78 gives Q[0][0] = +Inf"},
		{"huge interval", strings.Replace(limitsBase, "interval: 2", "interval: 1e160", 1), cv(1e160, 0.5),
			"case.yaml:6:11: interval: 1e+160 gives Q[0][0] = +Inf"},
		// 0·∞ is NaN: the interval is to blame even without noise.
		{"huge interval without noise", strings.Replace(strings.Replace(limitsBase, "interval: 2", "interval: 1e160", 1), "accel-noise: 0.5", "accel-noise: 0", 1),
			cv(1e160, 0), "case.yaml:6:11: interval: 1e+160 gives Q[0][0] = NaN"},
		// q·Δt⁴/4 with Δt = 2: 4e300 is finite, 4e308 is not.
		{"accel noise near the limit", strings.Replace(limitsBase, "accel-noise: 0.5", "accel-noise: 1e300", 1), cv(2, 1e300), ""},
		{"accel noise over the limit", strings.Replace(limitsBase, "accel-noise: 0.5", "accel-noise: 1e308", 1), cv(2, 1e308),
			"case.yaml:10:16: motion.accel-noise: 1e+308 with the interval 2 gives Q[0][0] = +Inf"},
		{"fast turn", turn("1e300"), ct(2, 1e300, 0.5), ""},
		// ω·Δt = 2e308 overflows, and sin(±Inf) is NaN.
		{"turn angle overflows", turn("1e308"), ct(2, 1e308, 0.5),
			"case.yaml:9:14: motion.turn-rate: 1e+308 times the interval 2 overflows the turn angle, giving F[0][1] = NaN"},
	}
	base, err := scenario.Parse("base.yaml", []byte(limitsBase))
	if err != nil {
		t.Fatal(err)
	}
	if _, err := sim.Prepare(base); err != nil {
		t.Fatalf("base scenario does not simulate: %v", err)
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			spec, loadErr := scenario.Parse("case.yaml", []byte(tt.yaml))
			mirrored, _ := scenario.Parse("base.yaml", []byte(limitsBase))
			tt.mirror(mirrored)
			_, simErr := sim.Prepare(mirrored)
			if (loadErr == nil) != (simErr == nil) {
				t.Fatalf("loader and simulator disagree:\n  Parse: %v\n  Prepare: %v", loadErr, simErr)
			}
			if tt.want == "" {
				if loadErr != nil {
					t.Fatalf("Parse: %v", loadErr)
				}
				if _, err := sim.Prepare(spec); err != nil {
					t.Fatalf("Prepare of the loaded scenario: %v", err)
				}
				return
			}
			if loadErr == nil || !strings.HasPrefix(loadErr.Error(), tt.want) {
				t.Fatalf("Parse error %v, want one starting %q", loadErr, tt.want)
			}
		})
	}
}
