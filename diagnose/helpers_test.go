package diagnose

import "strings"

// Helpers that build evaluation points the way a reader would.

// ref returns a sample's column: a pointer to its own copy of c.
func ref(c Column) *Column { return &c }

func col(base string, split Split, rate bool, dir Direction) Column {
	name := base
	switch split {
	case SplitTrain:
		name = "train_" + base
	case SplitVal:
		name = "val_" + base
	case SplitTrainDev:
		name = "train_dev_" + base
	case SplitTest:
		name = "test_" + base
	}
	return Column{Name: name, Base: base, Split: split, Kind: KindMetric, Dir: dir, Rate: rate}
}

// errPoint is a point of error rates ("err", lower is better) by split;
// a NaN-free negative value means "not logged".
func errPoint(epoch int, train, trainDev, val, test float64) Point {
	p := Point{Epoch: epoch, EpochLogged: true, Step: -1, Rows: 1, Line: epoch + 1}
	for _, sv := range []struct {
		s Split
		v float64
	}{{SplitTrain, train}, {SplitTrainDev, trainDev}, {SplitVal, val}, {SplitTest, test}} {
		if sv.v >= 0 || sv.v != sv.v {
			p.Samples = append(p.Samples, Sample{Column: ref(col("err", sv.s, true, LowerIsBetter)), Value: sv.v, Last: sv.v})
		}
	}
	return p
}

// metricPoint is a point with one value per named metric.
func metricPoint(epoch int, samples ...Sample) Point {
	return Point{Epoch: epoch, EpochLogged: true, Step: -1, Rows: 1, Line: epoch + 1, Samples: samples}
}

func loss(split Split, v float64) Sample {
	return Sample{Column: ref(col("loss", split, false, LowerIsBetter)), Value: v, Last: v}
}

func acc(split Split, v float64) Sample {
	return Sample{Column: ref(col("acc", split, true, HigherIsBetter)), Value: v, Last: v}
}

const absent = -1.0

func hasWarning(j Judgement, part string) bool {
	for _, w := range j.Warnings {
		if strings.Contains(w, part) {
			return true
		}
	}
	return false
}
