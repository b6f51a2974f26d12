package trainer

import (
	"math"
	"math/rand/v2"
)

// activation is the nonlinearity of the hidden layers.
type activation uint8

const (
	relu activation = iota
	tanhAct
	// leakyReLU passes leakySlope·x for x < 0, so a unit never dies for
	// every input (Maas et al. 2013 used slope 0.01; from memory).
	leakyReLU
)

// leakySlope is the negative-side slope of leakyReLU.
const leakySlope = 0.01

// String names the activation as the log's first line writes it ("leaky ReLU").
func (a activation) String() string {
	switch a {
	case tanhAct:
		return "tanh"
	case leakyReLU:
		return "leaky ReLU"
	}
	return "ReLU"
}

// network is a fully connected feed-forward network with one output logit
// for binary classification (sigmoid + cross-entropy). All parameters live
// in one flat slice so the optimizer works on plain slices; the per-layer
// slices are views into it. Scratch buffers are allocated once, so a
// training step allocates nothing.
//
// A network belongs to one goroutine. Its hot kernels (forward, backward,
// dot, axpy, axpy2 and the Adam step) are marked //go:norace: they touch
// only these private buffers, and instrumenting every slice access made
// training about 16× slower under the race detector (52 s against 8 s for
// the balanced scenario), which CI runs.
type network struct {
	sizes   []int // units per layer: inputs, hidden..., 1
	act     activation
	dropout float64 // probability of dropping a hidden unit in training

	params, grads []float64
	// isWeight marks the entries of params that are weights (not biases):
	// L2 regularization applies to weights only (common practice;
	// Goodfellow et al. 2016 §7.1, from memory).
	isWeight []bool
	w, b     [][]float64 // w[l]: sizes[l+1]×sizes[l] row-major
	gw, gb   [][]float64

	// Scratch, per layer l = 1..L (index 0 unused except out[0] = input).
	pre, out, mask, delta [][]float64
}

// newNetwork builds a network with the given layer sizes and initial
// weights drawn from rng: He initialization for ReLU layers (He et al.
// 2015, std √(2/fan_in)) and Glorot uniform for tanh layers and the output
// (Glorot & Bengio 2010, limit √(6/(fan_in+fan_out))); both from memory.
// Biases start at 0.
func newNetwork(sizes []int, act activation, dropout float64, rng *rand.Rand) *network {
	n := &network{sizes: append([]int(nil), sizes...), act: act, dropout: dropout}
	total := 0
	for l := 0; l+1 < len(sizes); l++ {
		total += sizes[l+1]*sizes[l] + sizes[l+1]
	}
	n.params = make([]float64, total)
	n.grads = make([]float64, total)
	n.isWeight = make([]bool, total)
	layers := len(sizes) - 1
	n.w, n.b = make([][]float64, layers), make([][]float64, layers)
	n.gw, n.gb = make([][]float64, layers), make([][]float64, layers)
	off := 0
	for l := range layers {
		in, outN := sizes[l], sizes[l+1]
		nw := in * outN
		n.w[l], n.gw[l] = n.params[off:off+nw], n.grads[off:off+nw]
		for i := off; i < off+nw; i++ {
			n.isWeight[i] = true
		}
		off += nw
		n.b[l], n.gb[l] = n.params[off:off+outN], n.grads[off:off+outN]
		off += outN
		last := l == layers-1
		if (act == relu || act == leakyReLU) && !last {
			std := math.Sqrt(2 / float64(in))
			for i := range n.w[l] {
				n.w[l][i] = std * rng.NormFloat64()
			}
		} else {
			lim := math.Sqrt(6 / float64(in+outN))
			for i := range n.w[l] {
				n.w[l][i] = lim * (2*rng.Float64() - 1)
			}
		}
	}
	n.pre = make([][]float64, len(sizes))
	n.out = make([][]float64, len(sizes))
	n.mask = make([][]float64, len(sizes))
	n.delta = make([][]float64, len(sizes))
	for l := 1; l < len(sizes); l++ {
		n.pre[l] = make([]float64, sizes[l])
		n.out[l] = make([]float64, sizes[l])
		n.mask[l] = make([]float64, sizes[l])
		n.delta[l] = make([]float64, sizes[l])
	}
	return n
}

// numParams is the number of trainable parameters.
func (n *network) numParams() int { return len(n.params) }

// forward returns the output logit for input x. With train set and a
// dropout rate, hidden units are dropped with inverted dropout (kept units
// scaled by 1/(1−p) in training, so inference needs no rescaling; the
// scaled form of Srivastava et al. 2014), drawing masks from rng.
//
//go:norace
func (n *network) forward(x []float64, train bool, rng *rand.Rand) float64 {
	n.out[0] = x
	last := len(n.sizes) - 1
	for l := 1; l <= last; l++ {
		in := n.out[l-1]
		w, b := n.w[l-1], n.b[l-1]
		pre, out := n.pre[l], n.out[l]
		nin := len(in)
		for j := range pre {
			pre[j] = b[j] + dot(w[j*nin:(j+1)*nin], in)
		}
		if l == last {
			copy(out, pre)
			break
		}
		switch n.act {
		case tanhAct:
			for j, v := range pre {
				out[j] = math.Tanh(v)
			}
		case leakyReLU:
			for j, v := range pre {
				if v < 0 {
					v *= leakySlope
				}
				out[j] = v
			}
		default:
			for j, v := range pre {
				out[j] = max(v, 0)
			}
		}
		mask := n.mask[l]
		if train && n.dropout > 0 {
			keep := 1 / (1 - n.dropout)
			for j := range out {
				if rng.Float64() < n.dropout {
					mask[j] = 0
				} else {
					mask[j] = keep
				}
				out[j] *= mask[j]
			}
		} else {
			for j := range mask {
				mask[j] = 1
			}
		}
	}
	return n.out[last][0]
}

// backward adds to the gradients the derivative of a loss whose derivative
// with respect to the output logit of the last forward pass is dz.
//
//go:norace
func (n *network) backward(dz float64) {
	last := len(n.sizes) - 1
	n.delta[last][0] = dz
	for l := last; l >= 1; l-- {
		delta := n.delta[l]
		in := n.out[l-1]
		nin := len(in)
		gw, gb, w := n.gw[l-1], n.gb[l-1], n.w[l-1]
		if l == 1 {
			for j, d := range delta {
				gb[j] += d
				if d != 0 {
					axpy(d, in, gw[j*nin:(j+1)*nin])
				}
			}
			break
		}
		// Accumulate this layer's gradients and propagate to the previous
		// hidden layer in one pass over the weights, then through that
		// layer's dropout mask and nonlinearity.
		prev := n.delta[l-1]
		for i := range prev {
			prev[i] = 0
		}
		for j, d := range delta {
			gb[j] += d
			if d != 0 {
				lo, hi := j*nin, (j+1)*nin
				axpy2(d, in, w[lo:hi], gw[lo:hi], prev)
			}
		}
		mask, pre, out := n.mask[l-1], n.pre[l-1], n.out[l-1]
		switch n.act {
		case tanhAct:
			for i := range prev {
				// out = mask·tanh(pre), so tanh(pre) = out/mask when kept.
				if mask[i] == 0 {
					prev[i] = 0
					continue
				}
				t := out[i] / mask[i]
				prev[i] *= mask[i] * (1 - t*t)
			}
		case leakyReLU:
			for i := range prev {
				if pre[i] < 0 {
					prev[i] *= mask[i] * leakySlope
				} else {
					prev[i] *= mask[i]
				}
			}
		default:
			for i := range prev {
				if pre[i] <= 0 {
					prev[i] = 0
				} else {
					prev[i] *= mask[i]
				}
			}
		}
	}
}

// zeroGrads clears the gradient accumulators.
func (n *network) zeroGrads() {
	for i := range n.grads {
		n.grads[i] = 0
	}
}

// l2Penalty is ½·Σw² over the weights.
func (n *network) l2Penalty() float64 {
	var s float64
	for i, p := range n.params {
		if n.isWeight[i] {
			s += p * p
		}
	}
	return s / 2
}

// addL2 adds the gradient λ·w of the penalty λ·½·Σw² to the weights'
// gradients.
func (n *network) addL2(lambda float64) {
	if lambda == 0 {
		return
	}
	for i, p := range n.params {
		if n.isWeight[i] {
			n.grads[i] += lambda * p
		}
	}
}

// finite reports whether every parameter is a finite number.
func (n *network) finite() bool {
	for _, p := range n.params {
		if math.IsNaN(p) || math.IsInf(p, 0) {
			return false
		}
	}
	return true
}

// sigmoid is the logistic function, computed without overflow for large |z|.
func sigmoid(z float64) float64 {
	if z >= 0 {
		return 1 / (1 + math.Exp(-z))
	}
	e := math.Exp(z)
	return e / (1 + e)
}

// softplus is log(1+eᶻ) without overflow: max(z,0) + log1p(e^−|z|).
func softplus(z float64) float64 {
	return max(z, 0) + math.Log1p(math.Exp(-math.Abs(z)))
}

// crossEntropy is the binary cross-entropy (natural log) of label y ∈ {0,1}
// given the logit z: −y·log σ(z) − (1−y)·log(1−σ(z)), written as softplus
// so it stays finite for any finite z. An infinite logit on the wrong side
// gives +Inf, a NaN logit gives NaN: both are kept, they are the evidence of
// divergence.
func crossEntropy(z, y float64) float64 {
	if y > 0.5 {
		return softplus(-z)
	}
	return softplus(z)
}

// evaluation is the loss and accuracy of the network on one split.
type evaluation struct {
	loss, acc float64
}

// evaluate runs the network in inference mode over d and returns the mean
// cross-entropy and the accuracy (a logit above 0 predicts worn; a NaN
// logit predicts ok, as a comparison with NaN is false).
func (n *network) evaluate(d *dataset) evaluation {
	if d == nil || d.n == 0 {
		return evaluation{loss: math.NaN(), acc: math.NaN()}
	}
	var loss float64
	correct := 0
	for i := range d.n {
		z := n.forward(d.row(i), false, nil)
		y := d.y[i]
		loss += crossEntropy(z, y)
		if (z > 0) == (y > 0.5) {
			correct++
		}
	}
	return evaluation{loss: loss / float64(d.n), acc: float64(correct) / float64(d.n)}
}

// dot returns Σ a[i]·b[i] over len(a) elements, with four partial sums so
// the multiplications overlap (the order of additions is fixed, so the
// result is the same on every run).
//
//go:norace
func dot(a, b []float64) float64 {
	b = b[:len(a)]
	var s0, s1, s2, s3 float64
	i := 0
	for ; i+4 <= len(a); i += 4 {
		s0 += a[i] * b[i]
		s1 += a[i+1] * b[i+1]
		s2 += a[i+2] * b[i+2]
		s3 += a[i+3] * b[i+3]
	}
	for ; i < len(a); i++ {
		s0 += a[i] * b[i]
	}
	return (s0 + s1) + (s2 + s3)
}

// axpy adds alpha·x to y over len(x) elements.
//
//go:norace
func axpy(alpha float64, x, y []float64) {
	y = y[:len(x)]
	for i, v := range x {
		y[i] += alpha * v
	}
}

// axpy2 adds d·in to gw and d·w to prev over len(in) elements: the weight
// gradient and the back-propagated error of one unit, in one pass.
//
//go:norace
func axpy2(d float64, in, w, gw, prev []float64) {
	n := len(in)
	w, gw, prev = w[:n], gw[:n], prev[:n]
	for i, v := range in {
		gw[i] += d * v
		prev[i] += d * w[i]
	}
}
