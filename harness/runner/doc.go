// Package runner is trackgate's regression gate engine: it loads scenarios,
// simulates their runs, runs the reference tracker and the tracker under test,
// compares the two (and the blessed golden files), scores both against the
// ground truth and fills one result.Suite that every report is drawn from.
// The trackgate check, bless and explain commands are thin layers over Check,
// Bless and Explain, and Go tests call the same functions.
//
// # Pipeline
//
// For every scenario and every run held by the shard: sim.Prepare and Run give
// the scans and the truth, tracker.RunAll the reference's frames and per-step
// detail, driver.RunMany the tracker's frames; then the checks below run and
// the metrics are computed. Work is spread over Options.Workers goroutines,
// but every result lands in a slot fixed by (scenario, run), so the Suite
// is the same, byte for byte once encoded, whatever the worker count.
//
// # Checks against the reference
//
// Track names are first paired by their positions (compare.Align), so that
// a tracker may call its tracks anything and list tracks or detections in
// any order. The pairing is anchored on the steps where both runs took the
// same decisions: it is made over the steps before the first step s at
// which the reference's margin is within the ambiguity threshold, or a
// track, paired by the steps before s, reported a detection other than its
// partner's (a changed association of any kind); tracks that appear from
// that step on are paired over the whole run among themselves (see
// alignRun). After a swap, harmful or not, a track may follow the path the
// other object took in the reference's run for most of the run, and a
// whole-run pairing would swap the names back to the first step and report
// the identical steps before the swap as the divergence. Then, for each
// run:
//
//   - reference: step by step, every paired track's association is compared
//     with the reference's. The reference splits each scan into clusters
//     (connected components of the gating graph; package tracker), whose
//     posteriors are independent, so a change is judged in the cluster where
//     it happens. Let m_c be the margin of cluster c at the step, cost(its 2nd
//     best hypothesis) − cost(its best), and τ the ambiguity threshold
//     (tie_margin of the project file). The changed objects are grouped by
//     cluster: the change is a tie when m_c ≤ τ for every cluster c in which
//     the tracker's association differs (an exact tie, m_c = 0, is always
//     one); otherwise the objects of the clusters with m_c > τ are a
//     regression of kind "association", with the smallest of their margins,
//     and those of the tied clusters a tie, with the largest of theirs. A tie
//     in one cluster thus never excuses a change in another, although the
//     scan's margin, the smallest m_c, would. The probability reported is that
//     of the tracker's choice in those clusters: the product over them of the
//     cluster posterior of the most probable of the cluster's k best
//     hypotheses that agrees with what the tracker reported there (none when
//     one cluster does not list such a hypothesis); the posterior factorises
//     over clusters, so this is the reference's probability of the tracker's
//     choice whatever happens in the other clusters. A Detail without
//     per-cluster records (one built by hand) is judged as one cluster, by the
//     scan's margin and the probability of the scan's most probable listed
//     hypothesis that agrees with the tracker. A change in a tied cluster
//     whose choice is not one of the cluster's k best hypotheses within τ of
//     its best is a regression: the tie rule only covers a choice the
//     reference itself ranks within τ. After a tie the tracker resolved otherwise the two runs need not agree,
//     so the tracker is followed rather than dropped: the reference is
//     re-run from that step's predicted states with the tracker's
//     hypothesis forced in the tied clusters (tracker.StepWith; whole
//     clusters, the other clusters as before), and from then on continued
//     step by step from its own posteriors (tracker.StepFrom, an object
//     that appears later from its prior), exactly as its own run would have
//     gone had it chosen so. Every later step, estimates included, is
//     compared with this branch, and a later tie the tracker resolves
//     otherwise forks the branch again. The branch rejoins the reference's
//     run once its states are bit for bit the run's again, so it costs one
//     reference step per step it lasts and nothing while the tracker agrees.
//     For a tracker that does not report associations, the branch followed
//     in a cluster whose margin is within τ is the hypothesis within τ of
//     the cluster's best whose posterior means are nearest the tracker's
//     estimates: least sum, over the cluster's compared objects, of the
//     squared Mahalanobis distance (x̂ − x_h)ᵀ P_h⁻¹ (x̂ − x_h) between the
//     tracker's mean x̂ and the object's posterior N(x_h, P_h) under the
//     hypothesis (the best wins equal distances); a choice other than the
//     best is a tie, and the objects it moves are followed. A harmless
//     choice at a tie thus passes, and a fault after it (a biased estimate,
//     say) fails at its own step, whatever the tracker reports. Where no
//     branch can be run (a Detail built by hand, without the scenario and
//     its scans), the objects of a tie are no longer compared after it, and
//     the message says so. An object that diverged (a regression) is no longer compared. Its
//     state may rightly differ from the reference's,
//     and then so may the choice of every object whose association depends on
//     it: at each step, a live object joined to a stopped one by a chain of
//     objects sharing a detection (one in its gate in the reference's cost
//     matrix, or the one its track reported) is entangled. A changed
//     association of an entangled object is a tie whatever the margin, since
//     the reference run's margin no longer describes the tracker's situation,
//     and the object is stopped; its choice is left to the conformance check,
//     which restarts from the tracker's own state. An entangled object that
//     keeps the reference's association is still compared (its own state is
//     still the reference's); for a tracker that does not report associations,
//     an estimate difference of an entangled object is a tie likewise. Tracks
//     for objects that are not alive, and live objects without a track, are
//     divergences of kind "track-count".
//   - conformance (trackers that report covariances): at each step k the
//     reference restarts from the tracker's own estimates at step k−1
//     (tracker.StepFrom; objects appearing at k start from their priors),
//     predicts, associates and updates, and the tracker's step k is compared
//     with that: its association (tie or regression, by the margins of the
//     restarted step's clusters in which it differs, as above),
//     and, given the tracker's own association, its updated mean and
//     covariance against the Kalman update (package kalman) with the
//     detection it chose. A fault is thus placed at one step and told apart
//     as an association or an estimation fault, without the cascade that
//     follows a first divergence; a tie resolved the other way passes, as
//     the next step restarts from the tracker's state. For a tracker that
//     does not report associations, an estimate of an object in a cluster
//     of the restarted step whose margin is within τ that differs from the
//     update under the cluster's best hypothesis is compared with the
//     update under the hypothesis within τ of the best whose posterior
//     means are nearest the tracker's (as the reference check picks it);
//     when it agrees, the cluster's change is a tie, not a regression. At
//     an object's first step, a track whose estimate is instead another
//     appearing object's prior updated with the tracker's detection is
//     reported as an identity divergence (the track started as one object
//     and follows another), a tie when the clusters of both objects have
//     margins within τ.
//   - identity: compare.Follow matches tracks step by step; a track that
//     changes object, or an object that changes track, is a divergence of
//     kind "identity".
//
// The association timeline of a run's plot trace labels each step as the
// reference check judged it ("same", "tie" or "differs"), so after a tie
// the tracker resolved the other way a step that agrees with the
// reference's branch reads "same".
//
// # Checks against golden files
//
// For the first G runs of a scenario (Options.GoldenRuns, else golden_runs
// of the project file, per scenario or project-wide, else 3) the golden
// folder holds the scan tape, the reference's frames and metrics and, per
// tracker name, the tracker's frames and metrics; for every run of the
// scenario it holds the tracker's whole-run values, in one run values file
// per scenario and tracker (layout in package golden). Bless runs every
// run to record them.
// A stale golden (its scenario file changed) is never compared and makes
// the run an error; a tape or reference golden that differs from what the
// simulator and the reference produce now is an error naming them (the
// harness changed, not the tracker); the tracker's frames are compared with
// its blessed frames after alignment, under the same profile and tie rule
// as the reference check: a changed association takes the decision the
// reference check made for that object at that step (the reference check
// is run for this alone when only the goldens are compared), so that after
// a tie the tracker resolved the other way it is judged down the tracker's
// branch, where the reference's own run no longer describes the tracker's
// situation; an association that agrees with the branch is a tie, and a
// change of an object the reference check no longer compares is a tie when
// that object had one. A change the reference check did not judge (it
// agrees with the reference's own run) is judged by the margins of the
// reference's clusters in which it happens (the blessed tracks are mapped
// to the reference's objects by aligning the blessed frames with the
// reference's). A track is not compared after its association changed. The tracker's metrics are compared under the profile's metric
// rule. The tracker's output, metrics and run values are blessed as one
// unit (when one is rewritten, so are the others), so a metrics difference
// while the output agrees means an inconsistent golden, an error that asks
// to bless again; while the output differs, it is part of that failure;
// after a tied association that parts the run from its golden, the metrics
// are not compared. A failing comparison
// leaves the actual output beside the golden as <golden>.actual (or under
// Options.Out; in CI mode only there). A missing golden is skipped, or a
// failure in CI mode.
//
// # Metrics
//
// Per run, on the position components: GOSPA per step (order p =
// metrics.order of the project file, default 2; α = 2; cut-off c =
// Options.Cutoff, else metrics.cutoff, else DefaultCutoff metres) between the true
// positions and the track positions; the per-step matching of that GOSPA
// maps tracks to objects for the identity switches, false tracks, missed
// objects and position RMSE of metrics.ScoreRun and for the NEES of matched
// tracks that report covariances; a covariance that is not positive
// definite (the protocol admits any symmetric one) leaves its sample out of
// the NEES, and the run's metrics check says how many (nees_skipped) while
// GOSPA and the rest are kept. Each step's GOSPA is also stored split in
// its p-th power, GOSPAᵖ = localisation + missed + false (Σ dᵖ over the
// matched pairs, (cᵖ/2) per unmatched object, (cᵖ/2) per unmatched track;
// García-Fernández, Rahmathullah, Svensson 2020, α = 2), with the time
// averages of the three parts; OSPA per step and its time average use the
// same order p and cut-off c (metrics.order and metrics.cutoff of the
// project file serve both distances; there is no separate OSPA setting);
// the per-object position and velocity RMSE over the steps some track
// covers the object come from metrics.ScoreRun. The protocol carries no
// innovations, so the NIS of a run is computed from the tracker's own
// reports: at step k, for a track matched to an object that names the
// detection z it was updated with and reported a covariance at step k−1,
// the model predicts that previous estimate, x⁻ = F x, P⁻ = F P Fᵀ + Q,
// and NIS = νᵀ S⁻¹ ν with ν = z − H x⁻ and S = H P⁻ Hᵀ + R: what the
// Kalman update of the track's own state with its own choice would see
// (for the reference's frames, exactly the reference's own NIS). The run
// stores the samples per step, their per-step averages, MeanNIS and the
// fraction of samples inside the two-sided 95 % χ²_m interval, m the
// measurement dimension. A tracker that reports no associations or no
// covariances has no NIS. None of these is a whole-run value: the golden
// metrics files and the gates are unchanged. Per scenario: the mean GOSPA
// per step over runs, the average NEES per step judged against the
// chi-square band at 95 % of its own sample count (runs × matched tracks
// at the step; see Judge) and the fraction of steps inside it; likewise
// for the NIS with m degrees of freedom per sample; the split and OSPA
// averaged over runs; each object's RMSE pooled over runs. Gates from the project file
// are judged on per-run values: an absolute gate on the mean over runs, a
// paired gate (metrics.Paired) against a baseline on the same seeds: the
// tracker's blessed values when every run has them (goldens compared), the
// reference's otherwise; when only some runs have blessed values the gate
// is judged against the reference on every run and its message says so.
//
// Every run carries in the result what its scenario's summary and gates
// are computed from: its per-step GOSPA and NEES values (RunMetrics), its
// whole-run values and the baselines' on the same seed (Run.Values,
// ReferenceValues, BlessedValues). Judge computes the summaries and gates
// from those alone, for the scenarios whose runs are all present; Check
// calls it on its own suite, and trackgate merge on merged shard results,
// so that shards split run by run merge to the unsharded result byte for
// byte.
//
// # Trackers in process, progress and timing
//
// Options.Local runs a tracker written in Go inside the harness (package
// trackgate/gatetest builds on it for go test). Options.Progress is told as
// runs finish (ProgressLine draws it on a terminal). Options.Timing
// records each run's share of the tracker phase in Run.Seconds; it is off
// by default because it is the one thing that makes two identical checks
// give different bytes.
//
// # Statuses and exit codes
//
// A run takes the worst status of its checks (result.Worst); a fault of the
// tracker makes it "fault", which outranks a regression and an error. ExitCode maps a
// suite status to the command's exit code: 0 pass or tie, 1 regression,
// 2 error (bad scenario, stale golden, harness failure), 3 tracker fault.
//
// References:
//   - A. S. Rahmathullah, Á. F. García-Fernández, L. Svensson, "Generalized
//     optimal sub-pattern assignment metric", FUSION 2017 (GOSPA, p = 2,
//     α = 2, and its localisation, missed and false parts).
//   - D. Schuhmacher, B.-T. Vo, B.-N. Vo, "A consistent metric for performance
//     evaluation of multi-object filters", IEEE Trans. Signal Processing
//     56(8):3447–3457, 2008 (OSPA).
//   - Y. Bar-Shalom, X. R. Li, T. Kirubarajan, "Estimation with Applications to
//     Tracking and Navigation", Wiley, 2001, §5.2 (Kalman update) and §5.4
//     (NEES and NIS and their chi-square acceptance intervals).
//   - K. G. Murty, "An algorithm for ranking all the assignments in order of
//     increasing cost", Operations Research 16(3):682–687, 1968 (the k best
//     hypotheses whose margin decides a tie).
//   - Y. Bar-Shalom, P. K. Willett, X. Tian, "Tracking and Data Fusion: A
//     Handbook of Algorithms", YBS Publishing, 2011 (clustering of tracks
//     that share measurements, which makes clusters independent; from
//     memory).
package runner
