package trainer

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// The data set is an invented factory scenario: each example is one reading
// of a machine on a production line, labelled ok (0) or worn (1).
//
// A machine runs at a spindle speed and a load. From those, its expected
// vibration and bearing temperature follow; a reading deviates from them by
// a vibration excess a (in units of 0.3 of log vibration) and a heat excess
// b (in units of 7 °C). A healthy machine stays inside an envelope
// a² + b² ≤ R(h)², whose radius shrinks with the hours since its last
// service; outside it (running too rough or too smooth, too hot or too
// cold) the machine is worn. Motor current follows the load and carries no
// extra information; it is there, with the hours, to make the network sort
// out what matters.
//
// The clean label is a deterministic function of the six readings, so the
// Bayes classifier is the rule itself, and flipping each label with
// probability q < ½ makes the optimal error exactly q.

// Feature indices of a reading.
const (
	featSpeed   = iota // spindle speed, rpm
	featLoad           // load, fraction of rated
	featVib            // vibration, mm/s RMS
	featTemp           // bearing temperature, °C
	featCurrent        // motor current, A
	featHours          // hours since the last service
	numFeatures
)

// Constants of the invented rule. Units beside each; the values are our
// own, chosen so that about a quarter of the machines are worn.
const (
	vibLogScale   = 0.30   // log(mm/s) per unit of vibration excess
	heatScale     = 7.0    // °C per unit of heat excess
	envelopeFresh = 1.85   // envelope radius right after a service (excess units)
	envelopeAged  = 1.45   // envelope radius at serviceHours (excess units)
	serviceHours  = 6000.0 // longest time between services, h
)

// lineSpec describes the machines of one production line and its sensors.
type lineSpec struct {
	name             string
	speedLo, speedHi float64 // rpm
	loadLo, loadHi   float64 // fraction of rated
	tempOffset       float64 // °C the temperature probes read above the truth
	vibGain          float64 // factor the vibration sensors read above the truth
}

// lineA is the line the network trains on.
var lineA = lineSpec{
	name:    "line A",
	speedLo: 1200, speedHi: 3000,
	loadLo: 0.3, loadHi: 1.0,
	vibGain: 1,
}

// lineB is another line: faster, more loaded machines, temperature probes
// that read 3 °C high and vibration sensors that read 8% high (a
// calibration drift). The rule is the same physics; only what the sensors
// report and the operating range differ, so the optimal error is still q.
var lineB = lineSpec{
	name:    "line B",
	speedLo: 2200, speedHi: 3600,
	loadLo: 0.5, loadHi: 1.0,
	tempOffset: 3,
	vibGain:    1.08,
}

// expectedVib is the vibration of a healthy machine, mm/s RMS.
func expectedVib(speed, load float64) float64 {
	s := speed / 3000
	return 1.2 + 1.6*s*s + 0.8*load
}

// expectedTemp is the bearing temperature of a healthy machine, °C.
func expectedTemp(speed, load float64) float64 {
	return 35 + 30*load + 0.004*(speed-1000)
}

// expectedCurrent is the motor current at a load, A.
func expectedCurrent(load float64) float64 { return 4 + 16*load }

// envelope is the radius of the healthy envelope after h hours, in excess
// units.
func envelope(hours float64) float64 {
	f := math.Min(math.Max(hours/serviceHours, 0), 1)
	return envelopeFresh + (envelopeAged-envelopeFresh)*f
}

// wornRule is the clean label of true (not sensor-distorted) readings.
func wornRule(x []float64) bool {
	a := math.Log(x[featVib]/expectedVib(x[featSpeed], x[featLoad])) / vibLogScale
	b := (x[featTemp] - expectedTemp(x[featSpeed], x[featLoad])) / heatScale
	r := envelope(x[featHours])
	return a*a+b*b > r*r
}

// drawMachine fills x with the true readings of one machine of the line.
func (l lineSpec) drawMachine(rng *rand.Rand, x []float64) {
	speed := l.speedLo + (l.speedHi-l.speedLo)*rng.Float64()
	load := l.loadLo + (l.loadHi-l.loadLo)*rng.Float64()
	hours := serviceHours * rng.Float64()
	a := rng.NormFloat64()
	b := rng.NormFloat64()
	x[featSpeed] = speed
	x[featLoad] = load
	x[featVib] = expectedVib(speed, load) * math.Exp(vibLogScale*a)
	x[featTemp] = expectedTemp(speed, load) + heatScale*b
	x[featCurrent] = expectedCurrent(load) + 1.2*rng.NormFloat64()
	x[featHours] = hours
}

// sense turns true readings into what the line's sensors report.
func (l lineSpec) sense(x []float64) {
	x[featTemp] += l.tempOffset
	x[featVib] *= l.vibGain
}

// dataset is one split: n examples of dim readings each.
type dataset struct {
	n, dim int
	x      []float64 // n×dim, row-major; standardized by makeSplits
	y      []float64 // noisy labels, 0 or 1
	// clean holds the rule's labels before the flips; flipped counts the
	// labels that differ. Kept for tests of the generator.
	clean   []float64
	flipped int
}

func (d *dataset) row(i int) []float64 { return d.x[i*d.dim : (i+1)*d.dim] }

// generate draws n readings from the line and labels them with the rule,
// flipping each label with probability q.
func generate(rng *rand.Rand, l lineSpec, n int, q float64) *dataset {
	d := &dataset{
		n:     n,
		dim:   numFeatures,
		x:     make([]float64, n*numFeatures),
		y:     make([]float64, n),
		clean: make([]float64, n),
	}
	for i := range n {
		x := d.row(i)
		l.drawMachine(rng, x)
		if wornRule(x) {
			d.clean[i] = 1
		}
		l.sense(x)
		d.y[i] = d.clean[i]
		if rng.Float64() < q {
			d.y[i] = 1 - d.y[i]
			d.flipped++
		}
	}
	return d
}

// scaler standardizes features with the mean and standard deviation of the
// training split (common practice: statistics from training data only, so
// no information leaks from the held-out splits).
type scaler struct {
	mean, inv [numFeatures]float64
}

func fitScaler(d *dataset) scaler {
	var s scaler
	if d.n == 0 {
		for j := range s.inv {
			s.inv[j] = 1
		}
		return s
	}
	for j := range numFeatures {
		var sum float64
		for i := range d.n {
			sum += d.x[i*numFeatures+j]
		}
		m := sum / float64(d.n)
		var ss float64
		for i := range d.n {
			dv := d.x[i*numFeatures+j] - m
			ss += dv * dv
		}
		sd := math.Sqrt(ss / float64(d.n))
		s.mean[j] = m
		s.inv[j] = 1
		if sd > 0 {
			s.inv[j] = 1 / sd
		}
	}
	return s
}

func (s scaler) apply(d *dataset) {
	for i := range d.n {
		x := d.row(i)
		for j := range numFeatures {
			x[j] = (x[j] - s.mean[j]) * s.inv[j]
		}
	}
}

// dataSpec sizes the splits of a scenario.
type dataSpec struct {
	train, val, trainDev int
	noise                float64 // label-flip probability q
	valLine              lineSpec
}

// note says in one line how the data were made.
func (s dataSpec) note() string {
	n := fmt.Sprintf("synthetic machine readings (6 sensors) labelled worn by a known envelope rule, %.0f%% of labels flipped so the optimal error is %.0f%%; %d train / %d val",
		100*s.noise, 100*s.noise, s.train, s.val)
	if s.trainDev > 0 {
		n += fmt.Sprintf(" / %d train-dev", s.trainDev)
	}
	if s.valLine.name != lineA.name {
		n += fmt.Sprintf("; validation machines from %s (temperature probes +%.0f °C, vibration sensors ×%.2f, %.0f–%.0f rpm)",
			s.valLine.name, s.valLine.tempOffset, s.valLine.vibGain, s.valLine.speedLo, s.valLine.speedHi)
	}
	return n
}

// splits are the standardized data of one run.
type splits struct {
	train, val, trainDev *dataset
}

// makeSplits draws the splits from one random stream, in a fixed order, so
// a seed always gives the same data.
func (s dataSpec) makeSplits(rng *rand.Rand) splits {
	sp := splits{train: generate(rng, lineA, s.train, s.noise)}
	if s.trainDev > 0 {
		sp.trainDev = generate(rng, lineA, s.trainDev, s.noise)
	}
	sp.val = generate(rng, s.valLine, s.val, s.noise)
	sc := fitScaler(sp.train)
	sc.apply(sp.train)
	sc.apply(sp.val)
	if sp.trainDev != nil {
		sc.apply(sp.trainDev)
	}
	return sp
}
