package watch

import (
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// Source: testdata/frameworks/README.md. Each log there is the real output
// of a real library (scikit-learn 1.2, xgboost 1.7, PyTorch 1.13 loops),
// or a layout written from memory filled with a real run's numbers, and
// has a twin X.plain.csv with the same run as plain
// epoch,train_loss,val_loss,train_acc,val_acc rows (accuracies as
// fractions, error rates as 1 − error, percents / 100; a per-batch
// training loss as the mean of the epoch's printed values). Reading the
// log must give the twin's epochs, as numbered, and its values, and the
// same verdict.

// frameworkFiles lists the fixtures and the layout each must be read as.
var frameworkFiles = []struct {
	file   string
	format string
}{
	{"aligned-table-good.txt", "table"}, {"aligned-table-overfit.txt", "table"},
	{"comments-good.tsv", "tsv"}, {"comments-overfit.tsv", "tsv"},
	{"dictlines-good.log", "pydict"}, {"dictlines-overfit.log", "pydict"},
	{"epochval-good.log", "text"}, {"epochval-overfit.log", "text"},
	{"keras-style-good.csv", "csv"}, {"keras-style-overfit.csv", "csv"},
	{"keyvalue-good.log", "text"}, {"keyvalue-overfit.log", "text"},
	{"lightgbm-style-good.log", "rounds"}, {"lightgbm-style-overfit.log", "rounds"},
	{"loghistory-good.json", "jsondoc"}, {"loghistory-overfit.json", "jsondoc"},
	{"numpy-dict-good.log", "pydict"}, {"numpy-dict-overfit.log", "pydict"},
	{"numpy2-dict-good.log", "pydict"}, {"numpy2-dict-overfit.log", "pydict"},
	{"sklearn-mlp-earlystop-good.log", "text"}, {"sklearn-mlp-earlystop-overfit.log", "text"},
	{"sklearn-mlp-good.log", "text"}, {"sklearn-mlp-overfit.log", "text"},
	{"torch-classic-good.log", "text"}, {"torch-classic-overfit.log", "text"},
	{"tqdm-epochs-good.log", "bars"}, {"tqdm-epochs-overfit.log", "bars"},
	{"tqdm-epochs-pty-good.log", "bars"}, {"tqdm-epochs-pty-overfit.log", "bars"},
	{"xgboost-sklearn-good.log", "rounds"}, {"xgboost-sklearn-overfit.log", "rounds"},
	{"xgboost-sklearn-good-every10.log", "rounds"}, {"xgboost-sklearn-overfit-every10.log", "rounds"},
	{"xgboost-train-good.log", "rounds"}, {"xgboost-train-overfit.log", "rounds"},
	{"xgboost-train-good-every10.log", "rounds"}, {"xgboost-train-overfit-every10.log", "rounds"},
}

func frameworkPath(name string) string { return filepath.Join("..", "testdata", "frameworks", name) }

// twin reads the plain-CSV twin of a fixture: its epochs and, by column,
// the values of each row.
func twin(t *testing.T, file string) (epochs []int, cols map[string][]float64) {
	t.Helper()
	name := strings.TrimSuffix(file, filepath.Ext(file)) + ".plain.csv"
	f, err := os.Open(frameworkPath(name))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	cols = map[string][]float64{}
	for _, r := range rows[1:] {
		for i, v := range r {
			x, err := strconv.ParseFloat(v, 64)
			if err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			if i == 0 {
				epochs = append(epochs, int(x))
			} else {
				cols[rows[0][i]] = append(cols[rows[0][i]], x)
			}
		}
	}
	return epochs, cols
}

// twinValue finds in p the value that a twin column holds: the first loss
// (a lower-is-better metric that is no rate) or the first accuracy (a
// rate, an error rate turned into 1 − error, a percent into a fraction) of
// the column's split.
func twinValue(p diagnose.Point, col string) (float64, bool) {
	split := diagnose.SplitTrain
	if strings.HasPrefix(col, "val_") {
		split = diagnose.SplitVal
	}
	acc := strings.HasSuffix(col, "_acc")
	for _, s := range p.Samples {
		c := s.Column
		if c.Kind != diagnose.KindMetric || c.Split != split {
			continue
		}
		v := s.Value
		switch {
		case acc && c.Base == "score" && c.Dir == diagnose.HigherIsBetter:
			// scikit-learn's "Validation score" is the accuracy of a
			// classifier (R² for a regressor); the twins are classifiers.
			return v, true
		case acc && c.Rate:
			if c.Percent {
				v /= 100
			}
			if c.Dir == diagnose.LowerIsBetter {
				v = 1 - v
			}
			return v, true
		case !acc && !c.Rate && c.Dir == diagnose.LowerIsBetter:
			return v, true
		}
	}
	return 0, false
}

// closeTo compares a value with the twin's, printed with 4 to 17
// significant digits: equal to 1e-9 relative, or to the twin's last digit
// when the twin was rounded by the log.
func closeTo(got, want float64) bool {
	return math.Abs(got-want) <= 1e-9*math.Max(1, math.Abs(want)) || math.Abs(got-want) <= 5e-5*math.Max(1e-3, math.Abs(want))
}

func judge(points []diagnose.Point) diagnose.Judgement {
	tr := diagnose.New(diagnose.Config{})
	for _, p := range points {
		tr.Add(p)
	}
	j, _ := tr.Latest()
	return j
}

func TestReadAll_Frameworks(t *testing.T) {
	for _, tt := range frameworkFiles {
		t.Run(tt.file, func(t *testing.T) {
			points, st, err := ReadAll(frameworkPath(tt.file), nil, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if st.Format.String() != tt.format {
				t.Errorf("format %v, want %s", st.Format, tt.format)
			}
			want, cols := twin(t, tt.file)
			if got := epochs(points); len(got) != len(want) || len(got) == 0 || got[0] != want[0] || got[len(got)-1] != want[len(want)-1] {
				t.Fatalf("%d points, epochs %v; want %d, %d to %d (stats %+v)", len(got), got, len(want), want[0], want[len(want)-1], st)
			}
			for i, p := range points {
				if p.Epoch != want[i] {
					t.Fatalf("point %d is epoch %d, want %d", i, p.Epoch, want[i])
				}
				for col, vals := range cols {
					got, ok := twinValue(p, col)
					if !ok || !closeTo(got, vals[i]) {
						t.Fatalf("epoch %d %s = %v (%v), want %v; samples %+v", p.Epoch, col, got, ok, vals[i], p.Samples)
					}
				}
			}
			plain, _, err := ReadAll(frameworkPath(strings.TrimSuffix(tt.file, filepath.Ext(tt.file))+".plain.csv"), nil, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if got, want := judge(points), judge(plain); got.Diagnosis != want.Diagnosis {
				t.Errorf("verdict %v on %+v, %v on its plain twin (%+v)", got.Diagnosis, got.Metric, want.Diagnosis, want.Metric)
			}
		})
	}
}

// TestReadAll_FrameworksVerdicts: where the judge tells a clearly good run
// from a clearly overfitting one on the plain twins, it does on the logs.
func TestReadAll_FrameworksVerdicts(t *testing.T) {
	for file, want := range map[string]diagnose.Diagnosis{
		"comments-good.tsv": diagnose.GoodFit, "comments-overfit.tsv": diagnose.HighVariance,
		"keras-style-good.csv": diagnose.GoodFit, "keras-style-overfit.csv": diagnose.HighVariance,
		"numpy-dict-good.log": diagnose.GoodFit, "numpy-dict-overfit.log": diagnose.HighVariance,
		"numpy2-dict-good.log": diagnose.GoodFit, "numpy2-dict-overfit.log": diagnose.HighVariance,
		"tqdm-epochs-good.log": diagnose.GoodFit, "tqdm-epochs-overfit.log": diagnose.HighVariance,
		"tqdm-epochs-pty-good.log": diagnose.GoodFit, "tqdm-epochs-pty-overfit.log": diagnose.HighVariance,
	} {
		points, _, err := ReadAll(frameworkPath(file), nil, Options{})
		if err != nil {
			t.Fatal(err)
		}
		if got := judge(points).Diagnosis; got != want {
			t.Errorf("%s: %v, want %v", file, got, want)
		}
	}
}

// TestReadAll_FrameworksRoles: the roles the reader assumed on the captured
// logs are listed with their source, and a flag takes the guess away.
func TestReadAll_FrameworksRoles(t *testing.T) {
	tests := []struct {
		file  string
		opts  Options
		roles map[string]diagnose.Split // column → split assumed
	}{
		{"xgboost-sklearn-good.log", Options{}, map[string]diagnose.Split{
			"validation_0-mlogloss": diagnose.SplitTrain, "validation_0-merror": diagnose.SplitTrain,
			"validation_1-mlogloss": diagnose.SplitVal, "validation_1-merror": diagnose.SplitVal}},
		{"xgboost-sklearn-good.log", Options{Roles: Overrides{Train: "validation_0-merror", Val: "validation_1-merror"}}, map[string]diagnose.Split{
			"validation_0-mlogloss": diagnose.SplitTrain, "validation_1-mlogloss": diagnose.SplitVal}},
		{"xgboost-train-good.log", Options{}, map[string]diagnose.Split{}},
		{"aligned-table-good.txt", Options{}, map[string]diagnose.Split{"accuracy": diagnose.SplitVal}},
		{"torch-classic-good.log", Options{}, map[string]diagnose.Split{
			"Test set: Average loss": diagnose.SplitVal, "Test set: Accuracy": diagnose.SplitVal}},
	}
	for _, tt := range tests {
		t.Run(tt.file, func(t *testing.T) {
			_, st, err := ReadAll(frameworkPath(tt.file), nil, tt.opts)
			if err != nil {
				t.Fatal(err)
			}
			got := map[string]diagnose.Split{}
			for _, r := range st.Roles {
				if r.Source == "" || Sanitize(r.Source) != r.Source {
					t.Errorf("guess %+v lacks a clean source", r)
				}
				got[r.Column] = r.Split
			}
			if !reflect.DeepEqual(got, tt.roles) {
				t.Errorf("roles %+v, want %v", st.Roles, tt.roles)
			}
		})
	}
}

// TestFollow_JSONDocRewritten follows a trainer's state document that is
// dumped again, longer, at each checkpoint (truncated and written whole):
// the new records are read, none twice, in one segment, without notices.
func TestFollow_JSONDocRewritten(t *testing.T) {
	early, err := os.ReadFile(frameworkPath("loghistory-good-epoch3.json"))
	if err != nil {
		t.Fatal(err)
	}
	full, err := os.ReadFile(frameworkPath("loghistory-good.json"))
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "trainer_state.json")
	if err := os.WriteFile(path, early, 0o644); err != nil {
		t.Fatal(err)
	}
	f := startFollow(t, path, Options{})
	f.waitEpochs(t, 1, 2, 3)
	if err := os.WriteFile(path, full, 0o644); err != nil { // truncate, then write
		t.Fatal(err)
	}
	want, _ := twin(t, "loghistory-good.json")
	f.waitEpochs(t, want...)
	f.mu.Lock()
	defer f.mu.Unlock()
	if len(f.notices) > 0 || f.stats.Segments != 1 {
		t.Fatalf("notices %q segments %d", f.notices, f.stats.Segments)
	}
}
