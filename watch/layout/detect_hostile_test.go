package layout

import (
	"testing"
)

// TestDetect_HeaderWithHostileBytes: a header is a header even when a
// column name holds a byte that is not UTF-8 or an escape sequence: the
// log is read as CSV (its values with it) and the name reaches the
// columns sanitized.
func TestDetect_HeaderWithHostileBytes(t *testing.T) {
	tests := []struct {
		name, header, col string // col: the sanitized name of the second column
	}{
		{"InvalidUTF8", "epoch,lo\xffss,val_loss", "lo\uFFFDss"},
		{"Latin1", "epoch,p\xe9rte,val_loss", "p\uFFFDrte"},
		{"EscapeSequences", "epoch,\x1b[2J\x1b]0;x\aloss,val_loss", "loss"},
		{"Tabs", "epoch\tlo\xffss\tval_loss", "lo\uFFFDss"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			sep := ","
			if tt.name == "Tabs" {
				sep = "\t"
			}
			in := tt.header + "\n1" + sep + "0.5" + sep + "0.6\n2" + sep + "0.4" + sep + "0.5\n"
			pts, c := readString(t, in, Config{})
			if c.Format != CSV && c.Format != TSV {
				t.Fatalf("format %s, want csv or tsv", c.Format)
			}
			if len(pts) != 2 {
				t.Fatalf("%d points, want 2 (skipped %d: %v)", len(pts), c.Skipped, c.Examples)
			}
			if v, _ := sample(t, pts[1], "val_loss"); v != 0.5 {
				t.Errorf("epoch 2 val_loss %v, want 0.5", v)
			}
			if v, _ := sample(t, pts[1], tt.col); v != 0.4 {
				t.Errorf("epoch 2 %q %v, want 0.4", tt.col, v)
			}
			for _, col := range c.Columns {
				assertClean(t, col.Name)
			}
		})
	}
}
