package sweep

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/fitgap/fitgap/forecast"
)

func TestRow_JSONForm(t *testing.T) {
	s := New(Config{UseRungs: true, Rungs: Rungs{First: 1, Eta: 2}})
	live := Observation{LastWrite: t0, Pace: time.Second}
	addRun(s, "lr=0.1", ps("lr", "0.1"), metricFrac, []float64{0.1}, live)
	addRun(s, "lr=9\x1b[31m", ps("lr", "9\x1b]0;x\x07"), metricFrac, []float64{math.NaN()}, live)
	s.Evaluate(t0)
	b, err := json.Marshal(s.Rows()[1].JSONForm())
	if err != nil {
		t.Fatal(err)
	}
	got := string(b)
	for _, want := range []string{`"hopeless":true`, `"rule":"rungs"`, `"rung":1`, `"place":2`, `"keep":1`, `"rank":null`, `"state":"live"`} {
		if !strings.Contains(got, want) {
			t.Errorf("JSON lacks %s:\n%s", want, got)
		}
	}
	if strings.ContainsRune(got, 0x1b) || strings.Contains(got, `\u001b`) || strings.ContainsRune(got, 0x07) {
		t.Errorf("escape sequences reached the JSON: %s", got)
	}
	sum, err := json.Marshal(s.SummaryForm(forecast.DataOptions{}))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(sum), `"differing_hyperparameters":["lr"]`) || !strings.Contains(string(sum), `"hopeless":1`) {
		t.Errorf("summary: %s", sum)
	}
}
