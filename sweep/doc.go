// Package sweep is the domain of many runs at once: the runs of a sweep
// side by side, ranked by their best validation value, the hopeless ones
// flagged by published early-stopping rules with the numbers behind each
// flag, the hyperparameters that differ between runs, and what the sweep
// as a whole says about the problem.
//
// It is pure, like diagnose: no files, no clock (the caller passes the
// time), no terminal. Each run is judged by its own diagnose.Tracker
// elsewhere (pipeline.Run); the caller hands this package what the sweep
// needs of it — the latest judgement, the validation curve in the judged
// metric, the reader's state — and reads back rows.
//
//	per run: latest Judgement, curve, state ──► Sweep.Update
//	                                              │ (rules re-evaluated lazily)
//	                                              ▼
//	Sweep.Rows / Verdict / DataForecast ◄── the screen, report DIR, follow DIR
//
// The rules (README, "Watching a sweep"):
//   - the median stopping rule of Golovin et al. (KDD 2017): a run whose
//     best value by epoch t is strictly worse than the median of the
//     running averages of the completed runs up to epoch t (median.go);
//   - successive halving's rungs in the asynchronous form of Li et al.
//     (MLSys 2020): at epochs r, rη, rη², … only the top 1/η of the runs
//     that reached the rung continue (halving.go).
package sweep
