package diagnose

import (
	"encoding/json"
	"reflect"
	"strings"
	"testing"
)

// TestEnums_Tables: every value of every enumeration has a machine name
// (unique, lower case, as JSON writes it) and a phrase, and an unknown
// value still prints something that says what it is.
func TestEnums_Tables(t *testing.T) {
	type entry struct{ name, phrase, json string }
	collect := func(n int, at func(i int) entry) []entry {
		out := make([]entry, n)
		for i := range out {
			out[i] = at(i)
		}
		return out
	}
	marshal := func(v any) string { b, _ := json.Marshal(v); return strings.Trim(string(b), `"`) }
	tables := map[string][]entry{
		"Diagnosis": collect(len(Diagnoses()), func(i int) entry {
			d := Diagnoses()[i]
			return entry{d.String(), d.Phrase(), marshal(d)}
		}),
		"Component": collect(len(Components())+1, func(i int) entry {
			c := Component(i)
			return entry{c.String(), c.Phrase(), marshal(c)}
		}),
		"Progress": collect(len(Progresses()), func(i int) entry {
			p := Progresses()[i]
			return entry{p.String(), p.Phrase(), marshal(p)}
		}),
		"Signal": collect(len(Signals()), func(i int) entry {
			s := Signals()[i]
			return entry{s.String(), s.Phrase(), marshal(s)}
		}),
		"Split": collect(int(SplitTest)+1, func(i int) entry {
			s := Split(i)
			return entry{s.String(), s.Phrase(), marshal(s)}
		}),
	}
	for kind, entries := range tables {
		seen := map[string]bool{}
		for i, e := range entries {
			if e.name == "" || e.phrase == "" || e.name != strings.ToLower(e.name) || strings.ContainsAny(e.name, " _") {
				t.Errorf("%s %d: name %q, phrase %q", kind, i, e.name, e.phrase)
			}
			if e.json != e.name {
				t.Errorf("%s %d: JSON %q, name %q", kind, i, e.json, e.name)
			}
			if seen[e.name] {
				t.Errorf("%s: name %q twice", kind, e.name)
			}
			seen[e.name] = true
		}
	}
	if got := Diagnosis(200).String(); got != "diagnosis(200)" {
		t.Errorf("an unknown diagnosis prints %q", got)
	}
	if got := Signal(9).Phrase(); got != "signal(9)" {
		t.Errorf("an unknown signal's phrase is %q", got)
	}
}

// TestJudgementJSON_EveryFieldIsWritten sets each field of a Judgement in
// turn and checks that its JSON changes, so a field added to the model
// cannot be left out of its JSON form unnoticed. The fields listed are
// deliberately not written.
func TestJudgementJSON_EveryFieldIsWritten(t *testing.T) {
	notWritten := map[string]bool{
		"Index":               true, // a position in one process's history
		"Segment":             true, // a reader's count; the source's warnings say when the log restarted
		"Metric.Fraction":     true, // error_rate and metric say it
		"EarlyStop.MinDelta":  true, // a setting, as given on the command line
		"EarlyStop.Strip":     true, // Prechelt's k; p5 keeps its name
		"RateMetric.Base":     true, // val_rate_metric names it
		"RateMetric.Error":    true, // val_rate is always an error rate
		"RateMetric.Fraction": true, // and always a fraction
	}
	base := NoJudgement(Config{})
	base.Index = 0
	base.EarlyStop.BestVal = Some(0.1) // the best epoch is written with its value
	want, err := json.Marshal(base)
	if err != nil {
		t.Fatal(err)
	}
	var visit func(path string, v reflect.Value)
	visit = func(path string, v reflect.Value) {
		for i := 0; i < v.NumField(); i++ {
			f, fv := v.Type().Field(i), v.Field(i)
			name := strings.TrimPrefix(path+"."+f.Name, ".")
			switch {
			case fv.Kind() == reflect.Struct && f.Type != reflect.TypeOf(Num{}) && f.Type != reflect.TypeOf(Estimate{}):
				visit(name, fv)
				continue
			case f.Type == reflect.TypeOf(Estimate{}):
				visit(name, fv)
				continue
			}
			old := reflect.ValueOf(fv.Interface())
			switch fv.Kind() {
			case reflect.Int:
				fv.SetInt(fv.Int() + 7)
			case reflect.Float64:
				fv.SetFloat(fv.Float() + 0.5)
			case reflect.Bool:
				fv.SetBool(!fv.Bool())
			case reflect.String:
				fv.SetString(fv.String() + "x")
			case reflect.Uint8:
				fv.SetUint(fv.Uint() + 1)
			case reflect.Slice:
				fv.Set(reflect.MakeSlice(f.Type, 1, 1))
			case reflect.Struct: // Num
				fv.Set(reflect.ValueOf(Some(0.25)))
			default:
				t.Fatalf("%s: kind %v not covered", name, fv.Kind())
			}
			got, err := json.Marshal(base)
			if err != nil {
				t.Fatal(err)
			}
			if changed := string(got) != string(want); changed == notWritten[name] {
				t.Errorf("%s: JSON changed %v, want %v", name, changed, !notWritten[name])
			}
			fv.Set(old)
		}
	}
	visit("", reflect.ValueOf(&base).Elem())
}
