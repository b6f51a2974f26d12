package layout

import (
	"strings"
	"testing"
)

func TestParseFormat(t *testing.T) {
	for in, want := range map[string]Format{"": Auto, "auto": Auto, "CSV": CSV, "tsv": TSV, "tab": TSV,
		"jsonl": JSONL, "json": JSONL, "ndjson": JSONL, "text": Text, " console ": Text} {
		if got, err := ParseFormat(in); err != nil || got != want {
			t.Errorf("ParseFormat(%q) = %v, %v; want %v", in, got, err, want)
		}
	}
	_, err := ParseFormat("xml\x1b[2J")
	if err == nil || !strings.HasPrefix(err.Error(), `unknown format "xml": want auto, `) {
		t.Errorf("error = %v", err)
	}
	for _, name := range Names() {
		if !strings.Contains(err.Error(), name) {
			t.Errorf("error %q does not list %s", err, name)
		}
		if got, _ := ParseFormat(name); got.String() != name {
			t.Errorf("round trip of %s gave %v", name, got)
		}
	}
}

// TestDetect: the first non-empty line of each layout picks it; anything
// else is console text.
func TestDetect(t *testing.T) {
	for line, want := range map[string]Format{
		`{"epoch": 1, "loss": 0.5}`:    JSONL,
		"epoch,loss,val_loss":          CSV,
		"epoch;loss;val_loss":          CSV,
		"epoch\tloss\tval_loss":        TSV,
		"Epoch 1/10":                   Text,
		"loss 0.41, val_loss 0.52":     Text,
		"step: 10 | loss: 0.5":         Text,
		"Using device cuda, seed 1234": Text,
	} {
		if got := detect([]byte(line)).Format; got != want {
			t.Errorf("detect(%q) = %v, want %v", line, got, want)
		}
	}
}

// TestRegistry: every layout has a name, a constructor and a distinct
// rank, and text, which accepts any line, comes last.
func TestRegistry(t *testing.T) {
	ranks := map[int]Format{}
	for _, l := range registry {
		if l.Format == Auto || l.New == nil {
			t.Errorf("layout %+v lacks a name or a constructor", l)
		}
		if o, dup := ranks[l.Rank]; dup {
			t.Errorf("%s and %s share rank %d: detection order would depend on file order", o, l.Format, l.Rank)
		}
		ranks[l.Rank] = l.Format
	}
	if last := registry[len(registry)-1]; last.Format != Text {
		t.Errorf("last layout is %s, want text", last.Format)
	}
}
