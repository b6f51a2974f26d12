package sweep

import (
	"reflect"
	"testing"
)

func ps(kv ...string) Params {
	var p Params
	for i := 0; i+1 < len(kv); i += 2 {
		p = append(p, Param{Key: kv[i], Value: kv[i+1]})
	}
	return Sorted(p)
}

func TestDiffering(t *testing.T) {
	tests := []struct {
		name string
		runs []Params
		want []string
	}{
		{"OneRunNothingDiffers", []Params{ps("lr", "0.1")}, nil},
		{"SameEverywhere", []Params{ps("lr", "0.1", "bs", "32"), ps("lr", "0.1", "bs", "32")}, nil},
		{"OneKeyVaries", []Params{ps("lr", "0.1", "bs", "32"), ps("lr", "0.01", "bs", "32")}, []string{"lr"}},
		{"SameNumberWrittenTwoWays", []Params{ps("lr", "0.001"), ps("lr", "1e-3")}, nil},
		{"MissingInOneRun", []Params{ps("lr", "0.1", "seed", "1"), ps("lr", "0.1")}, []string{"seed"}},
		{"Sorted", []Params{ps("width", "8", "lr", "1"), ps("width", "16", "lr", "2")}, []string{"lr", "width"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := Differing(tt.runs); !reflect.DeepEqual(got, tt.want) {
				t.Errorf("Differing = %v, want %v", got, tt.want)
			}
		})
	}
}

func TestParams_MergeGetSorted(t *testing.T) {
	side := Params{{Key: "lr", Value: "0.1", From: "hparams.yaml"}}
	dir := Params{{Key: "lr", Value: "0.5", From: "directory name"}, {Key: "bs", Value: "64", From: "directory name"}}
	got := side.Merge(dir)
	want := Params{{Key: "bs", Value: "64", From: "directory name"}, {Key: "lr", Value: "0.1", From: "hparams.yaml"}}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("Merge = %v, want %v (the first source wins)", got, want)
	}
	if v, ok := got.Get("lr"); !ok || v != "0.1" {
		t.Errorf("Get(lr) = %q, %v", v, ok)
	}
	if _, ok := got.Get("zz"); ok {
		t.Error("Get of a missing key")
	}
	if got := Sorted(Params{{Key: "a", Value: "1"}, {Key: "a", Value: "2"}}); len(got) != 1 || got[0].Value != "1" {
		t.Errorf("Sorted keeps the first of a key: %v", got)
	}
}

func TestCompareValues(t *testing.T) {
	tests := []struct {
		a, b string
		want int
	}{
		{"2", "10", -1},      // numbers by value, not as text
		{"1e-3", "0.01", -1}, // scientific notation
		{"0.1", "adam", -1},  // numbers before text
		{"adam", "sgd", -1},
		{"", "1", 1}, // missing last
		{"x", "x", 0},
	}
	for _, tt := range tests {
		if got := CompareValues(tt.a, tt.b); got != tt.want {
			t.Errorf("CompareValues(%q, %q) = %d, want %d", tt.a, tt.b, got, tt.want)
		}
		if got := CompareValues(tt.b, tt.a); got != -tt.want {
			t.Errorf("CompareValues(%q, %q) = %d, want %d", tt.b, tt.a, got, -tt.want)
		}
	}
}

func TestParams_TrainSizeAndEpochs(t *testing.T) {
	tests := []struct {
		name   string
		p      Params
		size   float64
		epochs int
	}{
		{"Plain", ps("train_size", "2000", "epochs", "60"), 2000, 60},
		{"NestedAndDashes", ps("data.n-train", "500", "trainer.max_epochs", "100"), 500, 100},
		{"NotNumbers", ps("train_size", "all", "epochs", "1.5"), 0, 0},
		{"None", ps("lr", "0.1"), 0, 0},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			size, _ := tt.p.TrainSize()
			epochs, _ := tt.p.Epochs()
			if size != tt.size || epochs != tt.epochs {
				t.Errorf("TrainSize, Epochs = %v, %v; want %v, %v", size, epochs, tt.size, tt.epochs)
			}
		})
	}
}
