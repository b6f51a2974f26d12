package report

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/invopop/jsonschema"
	validator "github.com/santhosh-tekuri/jsonschema/v6"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/sweep"
)

// The published schemas are generated from the Go types of the JSON forms
// (report.Document, diagnose.StopJSON) and the comments of their fields,
// so the keys and their meaning are written once, beside the model.
// `go test ./report -update` rewrites docs/ after a change.
const (
	reportSchemaPath = "../docs/report-schema.json"
	stopSchemaPath   = "../docs/stop-file-schema.json"
	keysDocPath      = "../docs/report-json.md"
)

// schemaFor reflects the schema of v: the enumerations with the machine
// name and the wording of each value, optional numbers as number or null.
func schemaFor(t *testing.T, v any, title string) *jsonschema.Schema {
	t.Helper()
	r := &jsonschema.Reflector{
		Anonymous:      true,
		DoNotReference: true,
		ExpandedStruct: true,
		Mapper:         mapType,
	}
	for _, dir := range []struct{ pkg, path string }{
		{"github.com/fitgap/fitgap/diagnose", "../diagnose"},
		{"github.com/fitgap/fitgap/report", "."},
		{"github.com/fitgap/fitgap/sweep", "../sweep"},
		{"github.com/fitgap/fitgap/forecast", "../forecast"},
	} {
		if err := r.AddGoComments(dir.pkg, dir.path); err != nil {
			t.Fatalf("read the comments of %s: %v", dir.path, err)
		}
	}
	s := r.Reflect(v)
	s.Title = title
	hoistNullable(s)
	return s
}

// hoistNullable moves the description of a nullable field (a pointer
// tagged `jsonschema:"nullable"`, reflected as oneOf [the type, null])
// from the type to the field, where the reference reads it.
func hoistNullable(s *jsonschema.Schema) {
	if s == nil {
		return
	}
	if len(s.OneOf) == 2 && s.OneOf[1].Type == "null" && s.Description == "" {
		s.Description, s.OneOf[0].Description = s.OneOf[0].Description, ""
	}
	for _, o := range s.OneOf {
		hoistNullable(o)
	}
	hoistNullable(s.Items)
	if s.Properties != nil {
		for pair := s.Properties.Oldest(); pair != nil; pair = pair.Next() {
			hoistNullable(pair.Value)
		}
	}
}

func nullable(s *jsonschema.Schema) *jsonschema.Schema {
	return &jsonschema.Schema{OneOf: []*jsonschema.Schema{s, {Type: "null"}}}
}

// mapType gives the schema of the model's own value types; nil for the
// rest, which are reflected. Each call returns a new schema: the
// reflector writes the field's description into it.
func mapType(t reflect.Type) *jsonschema.Schema {
	switch t {
	case reflect.TypeOf(diagnose.Num{}):
		return nullable(&jsonschema.Schema{Type: "number"})
	case reflect.TypeOf(diagnose.OptInt{}):
		return nullable(&jsonschema.Schema{Type: "integer"})
	case reflect.TypeOf(diagnose.Diagnosis(0)):
		return enum(diagnose.Diagnoses(), func(d diagnose.Diagnosis) string { return d.Phrase() + " — " + d.Description() })
	case reflect.TypeOf(diagnose.Component(0)):
		return enum(diagnose.Components(), func(c diagnose.Component) string { return c.Phrase() + " — " + c.Description() })
	case reflect.TypeOf(diagnose.Progress(0)):
		return enum(diagnose.Progresses(), diagnose.Progress.Description)
	case reflect.TypeOf(diagnose.Signal(0)):
		return enum(diagnose.Signals(), diagnose.Signal.Description)
	case reflect.TypeOf(forecast.Interval{}):
		// Its MarshalJSON writes null for a bound that is not finite.
		o := &jsonschema.Schema{Type: "object", Properties: jsonschema.NewProperties(), Required: []string{"value", "lo", "hi"},
			AdditionalProperties: jsonschema.FalseSchema}
		for _, k := range []struct{ key, about string }{
			{"value", "the expected value"}, {"lo", "the lower end; null when unbounded"}, {"hi", "the upper end; null when unbounded"},
		} {
			n := nullable(&jsonschema.Schema{Type: "number"})
			n.Description = k.about
			o.Properties.Set(k.key, n)
		}
		return o
	case reflect.TypeOf(sweep.State(0)):
		return enum(sweep.States(), sweep.State.Description)
	case reflect.TypeOf(sweep.Rule(0)):
		return enum(sweep.Rules(), func(r sweep.Rule) string { return r.Phrase() + " — " + r.Source() })
	case reflect.TypeOf(forecast.Status(0)):
		return enum(forecast.Statuses(), forecast.Status.Description)
	case reflect.TypeOf(forecast.BreakCause(0)):
		return enum(forecast.BreakCauses(), func(b forecast.BreakCause) string {
			if b == forecast.NoBreak {
				return "no break: the fit starts at the first epoch logged"
			}
			return "the fit starts after " + b.Phrase()
		})
	case reflect.TypeOf(diagnose.Split(0)):
		return enum(diagnose.Splits(), func(s diagnose.Split) string { return s.Phrase() + " — " + s.Description() })
	}
	return nil
}

func enum[E fmt.Stringer](values []E, say func(E) string) *jsonschema.Schema {
	s := &jsonschema.Schema{Type: "string"}
	for _, v := range values {
		s.OneOf = append(s.OneOf, &jsonschema.Schema{Const: v.String(), Description: say(v)})
	}
	return s
}

func marshalSchema(t *testing.T, s *jsonschema.Schema) []byte {
	t.Helper()
	b, err := json.MarshalIndent(s, "", "  ")
	if err != nil {
		t.Fatal(err)
	}
	return append(b, '\n')
}

func TestSchema_UpToDate(t *testing.T) {
	report := schemaFor(t, &Document{}, "fitgap report --json")
	stop := schemaFor(t, &diagnose.StopJSON{}, "fitgap stop file")
	checkGenerated(t,
		generated{reportSchemaPath, marshalSchema(t, report)},
		generated{stopSchemaPath, marshalSchema(t, stop)},
		generated{keysDocPath, keysMarkdown(report, stop)})
}

// generated is a file made from the Go types: its path and what the types
// make of it now.
type generated struct {
	path string
	got  []byte
}

// checkGenerated writes the files with -update, and otherwise fails when
// one is out of step with the types.
func checkGenerated(t *testing.T, files ...generated) {
	t.Helper()
	for _, f := range files {
		if *update {
			if err := os.WriteFile(f.path, f.got, 0o644); err != nil {
				t.Fatal(err)
			}
			continue
		}
		want, err := os.ReadFile(f.path)
		if err != nil {
			t.Fatalf("read %s (go test ./report -update writes it): %v", f.path, err)
		}
		if !bytes.Equal(f.got, want) {
			t.Errorf("%s is out of step with the Go types it is generated from: go test ./report -update rewrites it", f.path)
		}
	}
}

// compileSchema compiles a published schema with the independent
// validator.
func compileSchema(t *testing.T, path string) *validator.Schema {
	t.Helper()
	abs, err := filepath.Abs(path)
	if err != nil {
		t.Fatal(err)
	}
	s, err := validator.NewCompiler().Compile(abs)
	if err != nil {
		t.Fatalf("compile %s: %v", path, err)
	}
	return s
}

// TestSchema_ValidatesOutput validates the summaries, the golden files
// and a stop file against the published schemas with an independent
// implementation of JSON Schema 2020-12. Source: JSON Schema 2020-12
// (json-schema.org), as implemented by santhosh-tekuri/jsonschema v6.
func TestSchema_ValidatesOutput(t *testing.T) {
	compile := func(path string) *validator.Schema { return compileSchema(t, path) }
	reportSchema := compile(reportSchemaPath)
	check := func(name string, s *validator.Schema, doc []byte) {
		t.Helper()
		v, err := validator.UnmarshalJSON(bytes.NewReader(doc))
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if err := s.Validate(v); err != nil {
			t.Errorf("%s does not match the schema: %v", name, err)
		}
	}
	goldens, _ := filepath.Glob("testdata/*.json")
	if len(goldens) == 0 {
		t.Fatal("no golden JSON files")
	}
	for _, g := range goldens {
		b, err := os.ReadFile(g)
		if err != nil {
			t.Fatal(err)
		}
		check(g, reportSchema, b)
	}
	tr := overfitRun(diagnose.Config{BayesError: 0.03, BayesErrorGiven: true, ValSize: 5000}, 40)
	for i := 0; i < tr.Len(); i++ {
		b, err := json.Marshal(BuildAt(Source{Name: "a.csv", Format: "csv", Points: tr.Len()}, tr, i))
		if err != nil {
			t.Fatal(err)
		}
		check(fmt.Sprintf("the summary at point %d", i), reportSchema, b)
		if j := tr.At(i); j.EarlyStop.Signal == diagnose.Stop {
			b, _ := json.Marshal(j.StopForm())
			check("the stop file", compile(stopSchemaPath), b)
		}
	}
	// And a document that breaks it is caught: the schema is not vacuous.
	bad := []byte(`{"source": "a.csv", "diagnosis": "fine"}`)
	v, _ := validator.UnmarshalJSON(bytes.NewReader(bad))
	if reportSchema.Validate(v) == nil {
		t.Error("the schema accepts a document without its keys and with an unknown diagnosis")
	}
}

// keysMarkdown is the human-readable reference of the keys, from the same
// schemas.
func keysMarkdown(schemas ...*jsonschema.Schema) []byte {
	var b strings.Builder
	b.WriteString("<!-- Generated by `go test ./report -update` from the Go types of the JSON forms; do not edit. -->\n")
	b.WriteString("# The JSON that fitgap writes\n\n")
	b.WriteString("Values of the judged metric are in its units (fractions for error rates, never percent); absent values are `null`; lists are never `null`. The schemas beside this file (`report-schema.json`, `stop-file-schema.json`, JSON Schema 2020-12) say the same for programs.\n")
	for _, s := range schemas {
		b.WriteString("\n## " + s.Title + "\n\n| key | type | meaning |\n|---|---|---|\n")
		writeKeys(&b, "", s)
	}
	b.WriteString("\n## The values of the named keys\n")
	for _, s := range schemas {
		writeValues(&b, "", s)
	}
	return []byte(b.String())
}

// writeValues lists the wording of each value of the enumerated keys.
func writeValues(b *strings.Builder, prefix string, s *jsonschema.Schema) {
	if s.Properties == nil {
		return
	}
	for pair := s.Properties.Oldest(); pair != nil; pair = pair.Next() {
		key, p := prefix+pair.Key, unwrapNull(pair.Value)
		if p.Type == "array" && p.Items != nil {
			p = p.Items
		}
		switch {
		case p.Type == "object":
			writeValues(b, key+".", p)
		case p.Type == "string" && len(p.OneOf) > 0:
			b.WriteString("\n`" + key + "`:\n\n| value | meaning |\n|---|---|\n")
			for _, v := range p.OneOf {
				b.WriteString(fmt.Sprintf("| `%v` | %s |\n", v.Const, v.Description))
			}
		}
	}
}

func writeKeys(b *strings.Builder, prefix string, s *jsonschema.Schema) {
	if s.Properties == nil {
		return
	}
	for pair := s.Properties.Oldest(); pair != nil; pair = pair.Next() {
		key, p := prefix+pair.Key, pair.Value
		b.WriteString("| `" + key + "` | " + typeOf(p) + " | " + strings.ReplaceAll(p.Description, "|", "\\|") + " |\n")
		p = unwrapNull(p)
		switch {
		case p.Type == "object":
			writeKeys(b, key+".", p)
		case p.Type == "array" && p.Items != nil && p.Items.Type == "object":
			writeKeys(b, key+"[].", p.Items)
		}
	}
}

// unwrapNull returns the type of a nullable object (oneOf [object,
// null]), whose keys the reference lists; other schemas as they are.
func unwrapNull(s *jsonschema.Schema) *jsonschema.Schema {
	if len(s.OneOf) == 2 && s.OneOf[1].Type == "null" && s.OneOf[0].Type == "object" {
		return s.OneOf[0]
	}
	return s
}

func typeOf(s *jsonschema.Schema) string {
	switch {
	case len(s.OneOf) == 2 && s.OneOf[1].Type == "null":
		return typeOf(s.OneOf[0]) + " or null"
	case s.Type == "string" && len(s.OneOf) > 0:
		names := make([]string, len(s.OneOf))
		for i, v := range s.OneOf {
			names[i] = fmt.Sprintf("`%v`", v.Const)
		}
		return strings.Join(names, ", ")
	case s.Type == "array" && s.Items != nil:
		return "list of " + typeOf(s.Items)
	}
	return s.Type
}
