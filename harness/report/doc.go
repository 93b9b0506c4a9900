// Package report renders a result.Suite for people and for CI: a terminal
// summary, JUnit XML, a Markdown summary and a self-contained HTML page with
// plots. Every renderer reads the Suite and nothing else, does no checking
// of its own and writes the same bytes for the same Suite.
//
// # Terminal
//
// Terminal writes one verdict line per scenario (status word, name, runs
// that passed out of runs held, mean GOSPA), then for each run that did not
// pass its checks' first divergence, worst differences and ties, the gates
// that failed, and faults with the tail of the tracker's stderr; a scenario
// that did not pass also gets a metrics line with the mean GOSPA, the time
// averages of the three parts of GOSPAᵖ (localisation + missed + false,
// which add up to the mean of GOSPAᵖ, not to the mean GOSPA to the p), the
// mean OSPA and, when recorded, the mean NIS and its fractions in band. ANSI
// colour is used only when TerminalOptions.Colour is set; the command sets
// it when standard output is a terminal and NO_COLOR is unset
// (https://no-color.org). Control characters from the tracker (stderr,
// excerpts) are shown escaped, so they cannot move the cursor or ring the
// bell.
//
// # JUnit XML
//
// JUnit writes the de-facto Ant JUnit shape: one <testsuite> per scenario,
// one <testcase> per run and check named "run N/check" with classname
// "trackgate.<scenario>" (stable and unique, so shard reports merge and CI
// history follows a test), plus one per gate. A failing check becomes
// <failure type="regression|tie-breaking">, a fault <error type="fault:...">,
// a skip <skipped>. Properties carry the seed, platform, tracker and shard,
// and each scenario's summary means (metrics.mean_gospa, the three parts,
// metrics.mean_ospa and the NIS figures) exactly, when recorded.
// Counts are recomputed from the cases. Characters that XML 1.0 forbids are
// replaced by U+FFFD, and a tracker's stderr is cut to its last 200 lines
// (64 KiB). No timestamp or host name is written, so the same result always
// gives the same file; time attributes come from Run.Seconds.
//
// # Markdown
//
// Markdown writes a table of scenarios (with the mean GOSPA, the mean
// parts of GOSPAᵖ and the mean OSPA) and then the failures, sized for a
// GitHub job summary (1 MiB per step) or a review comment (GitHub caps a
// comment at 65536 characters); MarkdownOptions.Limit bounds the output and
// a note says what was cut.
//
// # HTML
//
// HTML writes one file with inline CSS and SVG and no scripts or external
// resources. For each scenario it plots one run (the first that did not
// pass, else run 0): truth, detections, reference and tracker estimates
// with 2-sigma ellipses in the plane (or position against time for 1-D
// scenarios), the association timeline, GOSPA and the run's OSPA over time,
// the run's three parts of GOSPAᵖ over time, a table of each object's
// position and velocity RMSE (pooled over runs), and the average NEES and
// the average NIS over time with their acceptance bands. The band of step k is that of
// the M_k values averaged there (runs × matched tracks), drawn as a
// stepped band when the result records the bounds step by step, else the
// one band shared by every step; NEES values are placed at their steps
// when the result records them.
//
// The 2-sigma ellipse of a covariance [σxx σxy; σxy σyy] has semi-axes
// 2·sqrt(λ₁), 2·sqrt(λ₂) along the eigenvectors, with
// λ = (σxx+σyy)/2 ± sqrt(((σxx−σyy)/2)² + σxy²) and orientation
// θ = ½·atan2(2σxy, σxx−σyy). result.Point stores the ellipse already
// scaled, so its axes are sqrt(λ).
//
// Axis ticks use "nice numbers": steps of 1, 2 or 5 times a power of ten.
//
// References:
//   - P. S. Heckbert, "Nice Numbers for Graph Labels", Graphics Gems,
//     Academic Press, 1990, pp. 61–63.
//   - Y. Bar-Shalom, X. R. Li, T. Kirubarajan, "Estimation with Applications
//     to Tracking and Navigation", Wiley, 2001, §5.4 (NEES, NIS and their
//     two-sided acceptance intervals).
//   - A. S. Rahmathullah, Á. F. García-Fernández, L. Svensson, "Generalized
//     optimal sub-pattern assignment metric", FUSION 2017 (GOSPA with α = 2
//     and its localisation, missed and false parts).
//   - JUnit XML: Apache Ant JUnit task output; GitLab "Unit test reports".
package report
