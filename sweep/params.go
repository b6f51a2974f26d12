package sweep

import (
	"math"
	"sort"
	"strconv"
	"strings"

	"github.com/fitgap/fitgap/forecast"
)

// Param is one hyperparameter of a run: a key and its value as text
// (numbers as written, nested keys joined with dots: "optimizer.lr").
// Both are untrusted text from files and directory names: output
// sanitizes them.
type Param struct {
	Key, Value string
	// From says where the value was read ("hparams.yaml", "directory
	// name", "log column").
	From string
}

// Params are a run's hyperparameters sorted by key, each key once.
type Params []Param

// Get returns the value of key.
func (p Params) Get(key string) (string, bool) {
	i := sort.Search(len(p), func(i int) bool { return p[i].Key >= key })
	if i < len(p) && p[i].Key == key {
		return p[i].Value, true
	}
	return "", false
}

// Merge returns p with the keys of q that p lacks: p's values win, so a
// caller merges the sources in order of trust (a sidecar file, then the
// directory name, then the log's constant columns).
func (p Params) Merge(q Params) Params {
	out := make(Params, 0, len(p)+len(q))
	out = append(out, p...)
	for _, x := range q {
		if _, ok := p.Get(x.Key); !ok {
			out = append(out, x)
		}
	}
	return Sorted(out)
}

// Sorted sorts params by key and keeps the first of each key.
func Sorted(p Params) Params {
	sort.SliceStable(p, func(i, j int) bool { return p[i].Key < p[j].Key })
	out := p[:0]
	for i, x := range p {
		if i > 0 && x.Key == p[i-1].Key {
			continue
		}
		out = append(out, x)
	}
	return out
}

// Differing returns the keys whose values are not the same in every run
// (a key some runs lack differs), sorted: the hyperparameters a sweep
// varied. A key that only one of many runs has still differs.
func Differing(runs []Params) []string {
	if len(runs) < 2 {
		return nil
	}
	first := map[string]string{}
	count := map[string]int{}
	varies := map[string]bool{}
	for _, ps := range runs {
		for _, p := range ps {
			count[p.Key]++
			if v, ok := first[p.Key]; !ok {
				first[p.Key] = p.Value
			} else if !SameValue(v, p.Value) {
				varies[p.Key] = true
			}
		}
	}
	var keys []string
	for k, n := range count {
		if varies[k] || n < len(runs) {
			keys = append(keys, k)
		}
	}
	sort.Strings(keys)
	return keys
}

// SameValue reports whether two values are the same hyperparameter value:
// equal as text, or as numbers ("0.001" and "1e-3").
func SameValue(a, b string) bool {
	if a == b {
		return true
	}
	x, okA := Number(a)
	y, okB := Number(b)
	return okA && okB && x == y
}

// Number reads a value as a finite number.
func Number(v string) (float64, bool) {
	f, err := strconv.ParseFloat(strings.TrimSpace(v), 64)
	if err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
		return 0, false
	}
	return f, true
}

// CompareValues orders two values for sorting: numbers by value before
// text, text in byte order, a missing value ("") last.
func CompareValues(a, b string) int {
	switch {
	case a == b:
		return 0
	case a == "":
		return 1
	case b == "":
		return -1
	}
	x, okA := Number(a)
	y, okB := Number(b)
	switch {
	case okA && okB:
		switch {
		case x < y:
			return -1
		case x > y:
			return 1
		}
		return strings.Compare(a, b)
	case okA:
		return -1
	case okB:
		return 1
	}
	return strings.Compare(a, b)
}

// epochKeys are the names under which configs give the number of epochs
// a run trains for (common practice).
var epochKeys = map[string]bool{
	"epochs": true, "num_epochs": true, "n_epochs": true, "max_epochs": true,
	"total_epochs": true, "train_epochs": true, "epoch_count": true,
}

// normKey folds a key for matching by meaning: lower case, "-", " " and
// "." as "_", and only the last part of a nested key.
func normKey(k string) string {
	k = strings.ToLower(strings.TrimSpace(k))
	if i := strings.LastIndexByte(k, '.'); i >= 0 {
		k = k[i+1:]
	}
	return keySeparators.Replace(k)
}

// keySeparators are the separators normKey folds into "_".
var keySeparators = strings.NewReplacer("-", "_", " ", "_")

// TrainSize returns the training-set size a run's params give, if any.
func (p Params) TrainSize() (float64, bool) {
	for _, x := range p {
		if forecast.IsTrainSizeName(normKey(x.Key)) {
			if v, ok := Number(x.Value); ok && v >= 1 {
				return v, true
			}
		}
	}
	return 0, false
}

// Epochs returns the number of epochs a run's params say it trains for.
func (p Params) Epochs() (int, bool) {
	for _, x := range p {
		if epochKeys[normKey(x.Key)] {
			if v, ok := Number(x.Value); ok && v >= 1 && v <= math.MaxInt32 && v == math.Trunc(v) {
				return int(v), true
			}
		}
	}
	return 0, false
}
