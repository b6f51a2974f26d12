// Package diagnose judges a training run from its evaluation points: how
// far it is from the optimal error and why (avoidable bias, variance, data
// mismatch, overfitting to the validation set), whether to stop and which
// epoch to restore (patience and Prechelt's criteria), and what to change
// next, with the numbers behind each suggestion.
//
// It is pure: no I/O, no clock, no terminal. A Tracker takes Points one at
// a time (from a reader, a replay or a test), updates its state in
// amortized constant time, and keeps a compact history (the inputs and a
// copy of its state every few points) from which the Judgement made at any
// point is rebuilt exactly, so that any epoch can be inspected as it was
// judged then.
//
// The judgement model is defined here once: Judgement and its
// enumerations, each with its machine name and its human wording in one
// table (enums.go), and its JSON form (jsonform.go). Output packages lay
// it out; they do not restate it.
package diagnose
