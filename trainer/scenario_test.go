package trainer

import (
	"strings"
	"testing"
	"time"
)

func TestParseScenario(t *testing.T) {
	tests := []struct {
		in      string
		want    Scenario
		wantErr bool
	}{
		{"balanced", Balanced, false},
		{"underfit", Underfit, false},
		{"overfit", Overfit, false},
		{"diverge", Diverge, false},
		{"mismatch", Mismatch, false},
		{" Overfit ", Overfit, false},
		{"MISMATCH", Mismatch, false},
		{"", 0, true},
		{"over fit", 0, true},
		{"balanced\x1b[31m", 0, true},
	}
	for _, tc := range tests {
		t.Run(strings.ToUpper(tc.in), func(t *testing.T) {
			got, err := ParseScenario(tc.in)
			if (err != nil) != tc.wantErr {
				t.Fatalf("ParseScenario(%q) error %v, want error %v", tc.in, err, tc.wantErr)
			}
			if err != nil {
				if !strings.Contains(err.Error(), "want one of balanced, underfit, overfit, diverge, mismatch") {
					t.Errorf("error %q does not list the scenarios", err)
				}
				return
			}
			if got != tc.want {
				t.Errorf("ParseScenario(%q) = %v, want %v", tc.in, got, tc.want)
			}
		})
	}
}

func TestScenario_StringRoundTrips(t *testing.T) {
	all := Scenarios()
	if len(all) != 5 || all[0] != Balanced {
		t.Fatalf("Scenarios() = %v, want 5 with balanced first", all)
	}
	for _, s := range all {
		got, err := ParseScenario(s.String())
		if err != nil || got != s {
			t.Errorf("ParseScenario(%q) = %v, %v", s.String(), got, err)
		}
	}
	if got := Scenario(42).String(); got != "scenario(42)" {
		t.Errorf("Scenario(42).String() = %q", got)
	}
	if Scenario(0) != Balanced {
		t.Errorf("the zero Scenario is %v, want balanced (the default)", Scenario(0))
	}
}

// Describe is one printable line naming the network and the regime.
func TestScenario_Describe(t *testing.T) {
	want := map[Scenario]string{
		Balanced: "good fit",
		Underfit: "high bias",
		Overfit:  "high variance",
		Diverge:  "NaN",
		Mismatch: "data mismatch",
	}
	for _, s := range Scenarios() {
		t.Run(s.String(), func(t *testing.T) {
			d := s.Describe()
			if !strings.Contains(d, want[s]) || !strings.Contains(d, "network") {
				t.Errorf("Describe() = %q, want it to name the network and %q", d, want[s])
			}
			if strings.ContainsAny(d, "\n\r\t\x1b") {
				t.Errorf("Describe() = %q is not one plain line", d)
			}
		})
	}
	if got := Scenario(9).Describe(); got != "unknown scenario" {
		t.Errorf("Scenario(9).Describe() = %q", got)
	}
}

func TestParseLogFormat(t *testing.T) {
	tests := []struct {
		in      string
		want    LogFormat
		wantErr bool
	}{
		{"csv", CSV, false},
		{"jsonl", JSONL, false},
		{"text", Text, false},
		{"JSONL", JSONL, false},
		{"json", 0, true},
		{"tsv", 0, true},
		{"", 0, true},
	}
	for _, tc := range tests {
		t.Run(strings.ToUpper(tc.in), func(t *testing.T) {
			got, err := ParseLogFormat(tc.in)
			if (err != nil) != tc.wantErr {
				t.Fatalf("ParseLogFormat(%q) error %v, want error %v", tc.in, err, tc.wantErr)
			}
			if err == nil && got != tc.want {
				t.Errorf("ParseLogFormat(%q) = %v, want %v", tc.in, got, tc.want)
			}
			if err == nil && got.String() != strings.ToLower(tc.in) {
				t.Errorf("%v.String() = %q", got, got.String())
			}
		})
	}
	if got := LogFormat(7).String(); got != "format(7)" {
		t.Errorf("LogFormat(7).String() = %q", got)
	}
}

// The optimal error handed to the diagnosis is the label-noise rate, and
// the sizes are those of the splits Run trains on.
func TestConfig_Facts(t *testing.T) {
	for _, s := range Scenarios() {
		t.Run(s.String(), func(t *testing.T) {
			f := Config{Scenario: s}.Facts()
			tr, err := newTrainer(Config{Scenario: s})
			if err != nil {
				t.Fatal(err)
			}
			if f.BayesError != 0.05 {
				t.Errorf("BayesError = %v, want 0.05", f.BayesError)
			}
			devN := 0
			if tr.data.trainDev != nil {
				devN = tr.data.trainDev.n
			}
			if f.TrainSize != tr.data.train.n || f.ValSize != tr.data.val.n || f.TrainDevSize != devN {
				t.Errorf("Facts sizes %d/%d/%d, splits %d/%d/%d", f.TrainSize, f.ValSize, f.TrainDevSize, tr.data.train.n, tr.data.val.n, devN)
			}
			if (s == Mismatch) != (f.TrainDevSize > 0) {
				t.Errorf("TrainDevSize = %d: want a train-dev split in mismatch only", f.TrainDevSize)
			}
			if f.Note == "" || strings.ContainsAny(f.Note, "\n\x1b") {
				t.Errorf("Note = %q, want one plain line", f.Note)
			}
		})
	}
	if f := (Config{Scenario: 99}).Facts(); f != (Facts{}) {
		t.Errorf("Facts of an unknown scenario = %+v, want zero", f)
	}
}

func TestConfig_Validate(t *testing.T) {
	tests := []struct {
		name    string
		cfg     Config
		wantErr string
	}{
		{"ZeroIsDefaults", Config{}, ""},
		{"Explicit", Config{Scenario: Overfit, Epochs: 5, Seed: 9, Pace: time.Second, Format: Text}, ""},
		{"NegativeEpochs", Config{Epochs: -1}, "epochs -1 out of range"},
		{"TooManyEpochs", Config{Epochs: MaxEpochs + 1}, "out of range"},
		{"NegativePace", Config{Pace: -time.Millisecond}, "pace -1ms is negative"},
		{"UnknownScenario", Config{Scenario: 17}, "unknown scenario 17"},
		{"UnknownFormat", Config{Format: 3}, "unknown log format 3"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			err := tc.cfg.Validate()
			if tc.wantErr == "" {
				if err != nil {
					t.Errorf("Validate(%+v) = %v, want nil", tc.cfg, err)
				}
				return
			}
			if err == nil || !strings.Contains(err.Error(), tc.wantErr) {
				t.Errorf("Validate(%+v) = %v, want an error containing %q", tc.cfg, err, tc.wantErr)
			}
		})
	}
	d := Config{}.withDefaults()
	if d.Epochs != DefaultEpochs || d.Seed != DefaultSeed || d.Pace != 0 {
		t.Errorf("defaults %+v, want %d epochs, seed %d, pace 0", d, DefaultEpochs, DefaultSeed)
	}
}
