package sweep

import (
	"math"
	"strconv"

	"github.com/fitgap/fitgap/diagnose"
)

var (
	metricFrac = diagnose.Metric{Base: "acc", Error: true, Label: "error (1 − acc)", Fraction: true}
	metricLoss = diagnose.Metric{Base: "loss", Label: "loss"}
)

func sqrt(x float64) float64 { return math.Sqrt(x) }

func ftoa(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
