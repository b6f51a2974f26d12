// Package diagnose judges a training run from its evaluation points: how
// far it is from the optimal error and why (avoidable bias, variance, data
// mismatch, overfitting to the validation set), whether to stop and which
// epoch to restore (patience and Prechelt's criteria), and what to change
// next, with the numbers behind each suggestion.
//
// It is pure: no I/O, no clock, no terminal. A Tracker takes Points one at
// a time (from a reader, a replay or a test), updates its state in
// amortized constant time, and keeps the Judgement made at every point so
// that any epoch can be inspected as it was judged then.
package diagnose
