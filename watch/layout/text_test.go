package layout

import (
	"math"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// TestFindEpochMarker reads the epoch markers of console logs.
// Source: the marker shapes training scripts commonly print (common
// practice; the lines are invented, their shapes written from memory).
func TestFindEpochMarker(t *testing.T) {
	tests := []struct {
		line         string
		epoch, total int
		ok           bool
	}{
		{"Epoch 3/50", 3, 50, true},
		{"epoch 3", 3, 0, true},
		{"Epoch: 12 | loss 0.3", 12, 0, true},
		{"ep 7 - loss: 0.3", 7, 0, true},
		{"epoch=4 loss=0.2", 4, 0, true},
		{"[3/50] loss: 0.41", 3, 50, true},
		{"Epoch [3/50], Step [100/600], Loss: 0.2", 3, 50, true},
		{"Train Epoch: 1 [640/60000 (1%)]\tLoss: 0.123", 1, 0, true},
		{"Epoch 00003: val_loss improved from 0.5 to 0.4", 3, 0, true},
		{"epoch_loss: 0.3", 0, 0, false},
		{"step 100 loss 0.3", 0, 0, false},
		{"[640/60000 (1%)]", 0, 0, false},
		{"epochs 5 of 10", 5, 0, true},
		{"epoch 3.5", 0, 0, false},
	}
	for _, tt := range tests {
		t.Run(strconv.Quote(tt.line), func(t *testing.T) {
			e, total, ok := findEpochMarker(tt.line)
			if e != tt.epoch || total != tt.total || ok != tt.ok {
				t.Errorf("findEpochMarker(%q) = %d, %d, %v; want %d, %d, %v", tt.line, e, total, ok, tt.epoch, tt.total, tt.ok)
			}
		})
	}
}

// TestScanPairs reads the name/value pairs of console lines.
// Source: the pair shapes of console logs ("name: value", "name=value",
// " - " and "|" separators, progress-bar prefixes, percent and ratio
// values) are common practice; the lines are invented, from memory.
func TestScanPairs(t *testing.T) {
	tests := []struct {
		line string
		want []textPair
	}{
		{"loss: 0.41 - val_loss: 0.52", []textPair{{"loss", 0.41, 0}, {"val_loss", 0.52, 0}}},
		{"train loss: 0.41 - val acc: 0.84", []textPair{{"train loss", 0.41, 0}, {"val acc", 0.84, 0}}},
		{"loss=0.3 acc=0.9 lr=1e-3", []textPair{{"loss", 0.3, 0}, {"acc", 0.9, 0}, {"lr", 0.001, 0}}},
		{"epoch 3 | loss 0.41 | acc 84.2%", []textPair{{"epoch", 3, 0}, {"loss", 0.41, 0}, {"acc", 84.2, 0}}},
		{"100/100 [=====] - 5s 3ms/step - loss: 0.3 - accuracy: 0.9", []textPair{{"loss", 0.3, 0}, {"accuracy", 0.9, 0}}},
		{"INFO train loss: 0.5", []textPair{{"train loss", 0.5, 0}}},
		{"loss: nan, val_loss: inf", []textPair{{"loss", math.NaN(), 0}, {"val_loss", math.Inf(1), 0}}},
		{"Accuracy: 9893/10000 (99%)", []textPair{{"Accuracy", 9893, 10000}}},
		{"2024-01-01 12:00:00 starting", nil},
		{"ETA: 0:01:23", nil},
		{"from 0.5 to 0.4", nil},
		{"time: 12.3s, loss: -0.5", []textPair{{"time", 12.3, 0}, {"loss", -0.5, 0}}},
	}
	for _, tt := range tests {
		t.Run(strconv.Quote(tt.line), func(t *testing.T) {
			got, _ := scanPairs(nil, tt.line, nil)
			if len(got) != len(tt.want) {
				t.Fatalf("scanPairs(%q) = %+v, want %+v", tt.line, got, tt.want)
			}
			for i := range got {
				if got[i].name != tt.want[i].name || !sameFloat(got[i].value, tt.want[i].value) || got[i].total != tt.want[i].total {
					t.Fatalf("scanPairs(%q) = %+v, want %+v", tt.line, got, tt.want)
				}
			}
		})
	}
}

func TestReadAll_TextEpochs(t *testing.T) {
	in := "Epoch 1/3\n" +
		"10/10 [==>...] - loss: 0.9\r10/10 [=====] - 1s - loss: 0.5 - accuracy: 0.8 - val_loss: 0.6 - val_accuracy: 0.7\n" +
		"Epoch 2/3\n" +
		"\x1b[32m10/10\x1b[0m - loss: 0.4 - accuracy: 0.85 - val_loss: 0.55 - val_accuracy: 0.75\n" +
		"saving checkpoint to ./ckpt/model_2.bin\n" +
		"Epoch 3/3\n" +
		"10/10 - loss: 0.3\n"
	points, st := readString(t, in, Config{})
	if st.Format != Text {
		t.Fatalf("format = %v", st.Format)
	}
	if got := epochs(points); !reflect.DeepEqual(got, []int{1, 2, 3}) {
		t.Fatalf("epochs = %v", got)
	}
	if points[0].Total != 3 || !points[0].EpochLogged {
		t.Errorf("point = %+v", points[0])
	}
	// The text before the carriage return is a progress bar redrawn over.
	if v, l := sample(t, points[0], "loss"); v != 0.5 || l != 0.5 {
		t.Errorf("loss = %v/%v, want 0.5", v, l)
	}
	if v, _ := sample(t, points[1], "val_accuracy"); v != 0.75 {
		t.Errorf("val_accuracy = %v", v)
	}
	if len(points[2].Samples) != 1 {
		t.Errorf("epoch 3 = %+v", points[2].Samples)
	}
}

func TestReadAll_TextMergesLines(t *testing.T) {
	in := "epoch 1\ntrain loss: 0.9\ntrain loss: 0.8\nval loss: 0.85\nval acc: 0.7\nepoch 2\ntrain loss: 0.6\n"
	r, o := newTestReader(Config{})
	r.Feed([]byte(in))
	r.End()
	all := o.points
	// Epoch 1 is handed on when it gains validation values, and again when
	// it gains more; the consumer keeps the last one.
	var last []diagnose.Point
	for _, p := range all {
		last = appendPoint(last, p)
	}
	if got := epochs(last); !reflect.DeepEqual(got, []int{1, 2}) {
		t.Fatalf("epochs = %v", got)
	}
	p := last[0]
	// Training values are averaged over the epoch's lines, as the rows of
	// a per-step CSV are: (0.9 + 0.8) / 2 = 0.85, by hand.
	if v, l := sample(t, p, "train loss"); !near(v, 0.85) || l != 0.8 {
		t.Errorf("train loss = %v (last %v), want the mean 0.85 and the last 0.8", v, l)
	}
	if v, _ := sample(t, p, "val acc"); v != 0.7 {
		t.Errorf("val acc = %v", v)
	}
	if s, _ := p.Lookup(diagnose.SplitVal, "loss"); s.Value != 0.85 {
		t.Errorf("val loss = %+v", s)
	}
}

func TestReadAll_TextWithoutMarkers(t *testing.T) {
	in := "step 10 | loss 0.9\nstep 20 | loss 0.8 | val_loss 0.85\nstep 30 | loss 0.7\nstep 40 | loss 0.6 | val_loss 0.7\n"
	points, _ := readString(t, in, Config{})
	if len(points) != 2 || points[1].Step != 40 || points[1].EpochLogged {
		t.Fatalf("points = %+v", points)
	}
}

// TestReadAll_TextRatio: the classic example's evaluation line gives a
// fraction for "Accuracy: 9893/10000 (99%)", and "Test set:" puts its
// values on the test split, not the training one; with no validation split
// in the log the test split is taken as validation, and the guess listed.
func TestReadAll_TextRatio(t *testing.T) {
	in := "Train Epoch: 1 [0/60000 (0%)]\tLoss: 2.30\n\nTest set: Average loss: 0.0338, Accuracy: 9893/10000 (99%)\n"
	points, c := readString(t, in, Config{})
	s, ok := points[0].Lookup(diagnose.SplitVal, "accuracy")
	if !ok || !near(s.Value, 0.9893) || s.Column.Name != "Test set: Accuracy" || !s.Column.Rate {
		t.Errorf("accuracy = %+v, want 9893/10000 on the test split taken as validation", s)
	}
	if s, ok := points[0].Lookup(diagnose.SplitTrain, "loss"); !ok || s.Value != 2.30 {
		t.Errorf("training loss = %+v", s)
	}
	if len(c.Roles) != 2 || c.Roles[0].Split != diagnose.SplitVal || !strings.Contains(c.Roles[0].Source, "test split") {
		t.Errorf("roles = %+v", c.Roles)
	}
}

// TestContextPrefix: the split a line states once for its values.
func TestContextPrefix(t *testing.T) {
	for line, want := range map[string]string{
		"Test set: Average loss: 0.0338, Accuracy: 9893/10000 (99%)":            "Test set: ",
		"Validation: loss 0.41 acc 0.83":                                        "Validation: ",
		"2031/05/04 10:00:02 - mmengine - INFO - Epoch(val) [3][12/12]  acc: 9": "val/",
		"Epoch(train) [1][10/23]  lr: 1.0000e-03  loss: 2.1651":                 "train/",
		"Validation score: 0.912000":                                            "",
		"Train Epoch: 1 [0/150 (0%)]\tLoss: 2.285350":                           "",
		"Results of the whole run: loss 0.3":                                    "",
		"Epoch(warmup) [1] loss: 0.3":                                           "",
	} {
		_, lead := scanPairs(nil, line, nil)
		if got := contextPrefix(line, findMarker(line).mode, lead); got != want {
			t.Errorf("context of %q = %q, want %q", line, got, want)
		}
	}
}

// TestFindEpochMarker_Modes: scikit-learn's iterations and the bracketed
// epoch after a mode are epoch markers.
func TestFindEpochMarker_Modes(t *testing.T) {
	for line, want := range map[string]int{
		"Iteration 7, loss = 0.31210000":                                   7,
		"Epoch(val) [3][38/38]  accuracy/top1: 83.0":                       3,
		"2031/05/04 10:00:02 - mmengine - INFO - Epoch(train) [12][10/23]": 12,
	} {
		if e, _, ok := findEpochMarker(line); !ok || e != want {
			t.Errorf("findEpochMarker(%q) = %d, %v; want %d", line, e, ok, want)
		}
	}
	if _, _, ok := findEpochMarker("Iteration 7 of the outer loop"); ok {
		t.Errorf("a prose iteration is no marker")
	}
}

func FuzzText(f *testing.F) {
	for _, s := range []string{
		"Epoch 1/10\n10/10 - loss: 0.5 - val_loss: 0.6\n",
		"epoch 2 | train loss 0.4 | val acc 85%\r\n",
		"[3/50] loss=nan acc=0.1\n\x1b[31mERR\x1b[0m x: 1\n",
		"step: 1000/5000 loss: 1e-3\n",
		"Epoch 1\nstep 1 - loss: -2.5 - lr: 0.001\nstep 2 - loss: +12345678901234567890.5 - lr: 0.009\nstep 3 - loss: 0.0 - lr: 10\nstep 4 - loss: 9007199254740993 - lr: 7\n",
		"Epoch 1\nstep 1 - loss: 6.3e-05 - lr: 1E+22\nstep 2 - loss: 7.1e-22 - lr: 9E+23\nstep 3 - loss: 0.0e-0 - lr: 1E+00005\n",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, in []byte) {
		fuzzIngest(t, in, Text)
		if len(in) <= 1<<14 {
			checkFastPath(t, in, Config{Format: Text})
		}
	})
}
