// Package forecast says what more epochs and more data would buy, with an
// interval around every number.
//
// Along the epochs (Epochs): the validation curve of one run is fitted by a
// small ensemble of the parametric learning-curve families of Domhan,
// Springenberg & Hutter (IJCAI 2015), each by nonlinear least squares
// (Levenberg–Marquardt on gonum's linear algebra, started from a grid on
// the nonlinear parameters with the linear ones solved exactly), combined
// with Akaike weights, and turned into an 80 % interval that holds both the
// parameters' uncertainty and the per-epoch noise. It refuses, saying why,
// when there are too few points, when the curve has turned upward, when it
// diverges, and it fits only after a learning-rate step that broke the
// curve's shape.
//
// Along the data (Data): the best validation error of runs that differ in
// training-set size is fitted by ε(m) = a·m^(−b) + c, answering what
// doubling the data would buy, how much data a target error needs, and
// where the floor c lies beside the optimal error.
//
// Every answer is a heuristic aid: a parametric extrapolation assumes the
// curve keeps its shape. The package is pure: no I/O, no clock; the same
// input gives the same output.
package forecast
