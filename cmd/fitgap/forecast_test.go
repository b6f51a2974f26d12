package main

import (
	"bufio"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// forecastLog is an invented run's CSV log: a validation error that falls
// as 0.05 + 0.4·epoch^−0.6 with a small fixed wiggle, a training error 2
// points below, and a learning rate from lr(epoch); bad(epoch) replaces a
// validation accuracy by NaN.
func forecastLog(epochs int, val func(e int) float64, lr func(e int) float64) string {
	var b strings.Builder
	b.WriteString("epoch,acc,val_acc,lr\n")
	for e := 1; e <= epochs; e++ {
		v := val(e) + 0.002*math.Sin(1.7*float64(e))
		fmt.Fprintf(&b, "%d,%.5f,%.5f,%g\n", e, 1-(v-0.02), 1-v, lr(e))
	}
	return b.String()
}

func fallingError(e int) float64 { return 0.05 + 0.4*math.Pow(float64(e), -0.6) }
func constantRate(int) float64   { return 0.01 }

// forecastJSON is the part of the forecast object the tests read.
type forecastJSON struct {
	Status      string `json:"status"`
	Text        string `json:"text"`
	LastEpoch   *int   `json:"last_epoch"`
	TargetEpoch *int   `json:"target_epoch"`
	TargetGiven bool   `json:"target_given"`
	AtTarget    *struct {
		Value, Lo, Hi *float64
	} `json:"at_target"`
}

type forecastsJSON struct {
	Forecast *struct {
		Val   forecastJSON `json:"val"`
		Train forecastJSON `json:"train"`
	} `json:"forecast"`
}

// TestFollow_LinesCarryTheForecast reads the forecast object from each of
// follow's lines: a refusal while too few epochs are logged, then the
// forecast to the epoch --epochs gives.
func TestFollow_LinesCarryTheForecast(t *testing.T) {
	t.Parallel()
	stdout, stderr, code := runCLI(t, forecastLog(30, fallingError, constantRate), "follow", "--epochs", "90", "-")
	if code != 0 {
		t.Fatalf("follow: exit %d: %s", code, stderr)
	}
	var lines []forecastsJSON
	sc := bufio.NewScanner(strings.NewReader(stdout))
	for sc.Scan() {
		var l forecastsJSON
		if err := json.Unmarshal(sc.Bytes(), &l); err != nil {
			t.Fatalf("line %d: %v", len(lines)+1, err)
		}
		lines = append(lines, l)
	}
	if len(lines) != 30 {
		t.Fatalf("%d lines, want 30", len(lines))
	}
	for i, l := range lines {
		f := l.Forecast
		if f == nil {
			t.Fatalf("line %d has no forecast", i+1)
		}
		if f.Val.LastEpoch == nil || *f.Val.LastEpoch != i+1 {
			t.Errorf("line %d: forecast made at epoch %v", i+1, f.Val.LastEpoch)
		}
		if i+1 < 8 {
			if f.Val.Status != "too-few-points" || !strings.Contains(f.Val.Text, "need 8") || f.Val.AtTarget != nil {
				t.Errorf("line %d: %+v, want a refusal for too few epochs", i+1, f.Val)
			}
			continue
		}
		for _, c := range []forecastJSON{f.Val, f.Train} {
			if c.Status != "ok" || c.TargetEpoch == nil || *c.TargetEpoch != 90 || !c.TargetGiven ||
				c.AtTarget == nil || c.AtTarget.Lo == nil || c.AtTarget.Hi == nil || !(*c.AtTarget.Lo <= *c.AtTarget.Value && *c.AtTarget.Value <= *c.AtTarget.Hi) {
				t.Fatalf("line %d: %+v, want a forecast to epoch 90 with its interval", i+1, c)
			}
		}
	}
	if last := lines[29].Forecast.Val.Text; !strings.HasPrefix(last, "60 more epochs: ") {
		t.Errorf("last line's forecast %q", last)
	}
}

// TestReport_ForecastRefusals: each kind of refusal a log can bring
// reaches report --json with its status and reason, and the Markdown
// with its reason; none is left out.
func TestReport_ForecastRefusals(t *testing.T) {
	t.Parallel()
	turning := func(e int) float64 { return fallingError(e) + 0.004*math.Max(0, float64(e-20)) }
	tests := []struct {
		name   string
		log    string
		status string
		reason string
	}{
		{"TooFewPoints", forecastLog(5, fallingError, constantRate), "too-few-points", "no forecast: 5 epochs so far, need 8"},
		{"Turned", forecastLog(50, turning, constantRate), "turned", "no forecast: the curve has turned"},
		{"Diverging", forecastLog(20, fallingError, constantRate) + "21,0.9,nan,0.01\n", "diverging", "no forecast: diverging, NaN at epoch 21"},
		{"LRRising", forecastLog(30, fallingError, func(e int) float64 { return 1e-4 * math.Pow(1.3, float64(e)) }), "lr-rising",
			"no forecast: the learning rate is rising"},
		{"FewSinceLRStep", forecastLog(30, fallingError, func(e int) float64 {
			if e > 26 {
				return 0.001
			}
			return 0.01
		}), "too-few-points", "no forecast: 4 epochs since the learning-rate step at epoch 27, need 8"},
		{"NoValidation", "epoch,loss\n1,0.9\n2,0.8\n3,0.7\n", "too-few-points", "no forecast: no validation values logged yet"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			stdout, stderr, code := runCLI(t, tt.log, "report", "--json", "-")
			if code != 0 {
				t.Fatalf("report: exit %d: %s", code, stderr)
			}
			var doc forecastsJSON
			if err := json.Unmarshal([]byte(stdout), &doc); err != nil || doc.Forecast == nil {
				t.Fatalf("report --json: %v, forecast %v\n%s", err, doc.Forecast, stdout)
			}
			v := doc.Forecast.Val
			if v.Status != tt.status || !strings.HasPrefix(v.Text, tt.reason) || v.AtTarget != nil || v.TargetEpoch != nil {
				t.Errorf("got %+v, want %s: %q and null numbers", v, tt.status, tt.reason)
			}
			md, _, _ := runCLI(t, tt.log, "report", "-")
			if !strings.Contains(md, "## Forecast") || !strings.Contains(md, "- Validation: "+tt.reason) {
				t.Errorf("Markdown lacks the refusal %q:\n%s", tt.reason, md)
			}
		})
	}
}

// TestFollow_ExitOnTheForecastsStop: a plateau that patience alone would
// let run to its end, with a minimum improvement the forecast says the
// remaining epochs cannot bring: follow creates the stop file and ends on
// the forecast's reason.
func TestFollow_ExitOnTheForecastsStop(t *testing.T) {
	t.Parallel()
	plateau := func(e int) float64 { return 0.1 + 0.3*math.Exp(-float64(e)/4) }
	stop := filepath.Join(t.TempDir(), "run.stop")
	stdout, stderr, code := runCLI(t, forecastLog(80, plateau, constantRate),
		"follow", "--epochs", "100", "--min-delta", "1%", "--patience", "60", "--exit-on-stop", "--stop-file", stop, "-")
	if code != 0 {
		t.Fatalf("follow: exit %d: %s", code, stderr)
	}
	lines := strings.Split(strings.TrimSpace(stdout), "\n")
	var last struct {
		Epoch     int `json:"epoch"`
		EarlyStop struct {
			Signal string `json:"signal"`
			Reason string `json:"reason"`
		} `json:"early_stop"`
	}
	if err := json.Unmarshal([]byte(lines[len(lines)-1]), &last); err != nil {
		t.Fatal(err)
	}
	if last.EarlyStop.Signal != "stop" || !strings.HasPrefix(last.EarlyStop.Reason, "even the optimistic forecast") || last.Epoch >= 60 {
		t.Errorf("ended at epoch %d on %s: %q; want the forecast's stop before patience", last.Epoch, last.EarlyStop.Signal, last.EarlyStop.Reason)
	}
	b, err := os.ReadFile(stop)
	if err != nil || !strings.Contains(string(b), "optimistic forecast") {
		t.Errorf("stop file %q (%v)", b, err)
	}
}
