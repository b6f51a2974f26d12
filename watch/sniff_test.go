package watch

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestSniff(t *testing.T) {
	dir := t.TempDir()
	tests := []struct {
		name, text string
		format     string
		metrics    bool
		points     int
	}{
		{"CSVHeaderOnly", "epoch,loss,val_loss\n", "csv", true, 0},
		{"CSVRows", "epoch,loss,val_loss\n1,0.5,0.6\n2,0.4,0.5\n", "csv", true, 2},
		{"ConsoleAfterStartup", "Loading...\nBuilding model\nEpoch 1/5 - loss: 0.5 - val_loss: 0.6\n", "text", true, 1},
		{"Prose", "These are notes about the sweep.\nNothing to read here.\n", "text", false, 0},
		{"Empty", "", "auto", false, 0},
		{"NoNewlineAtEnd", "epoch,loss,val_loss\n1,0.5,0.6", "csv", true, 1},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			p := filepath.Join(dir, tt.name+".log")
			if err := os.WriteFile(p, []byte(tt.text), 0o644); err != nil {
				t.Fatal(err)
			}
			before, _ := os.Stat(p)
			s, err := Sniff(p, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if s.Format.String() != tt.format || s.Metrics() != tt.metrics || s.Points != tt.points || s.Size != int64(len(tt.text)) {
				t.Errorf("Sniff = %+v (metrics %v); want format %s, metrics %v, %d points", s, s.Metrics(), tt.format, tt.metrics, tt.points)
			}
			after, _ := os.Stat(p)
			if !after.ModTime().Equal(before.ModTime()) {
				t.Error("sniffing changed the log's modification time")
			}
		})
	}
	t.Run("LongHeadIsCut", func(t *testing.T) {
		p := filepath.Join(dir, "long.csv")
		text := "epoch,loss,val_loss\n" + strings.Repeat("1,0.5,0.6\n", SniffBytes/5)
		os.WriteFile(p, []byte(text), 0o644)
		s, err := Sniff(p, Options{})
		if err != nil || !s.Metrics() || s.Points == 0 || s.Size != int64(len(text)) {
			t.Errorf("Sniff = %+v, %v", s, err)
		}
	})
	for name, p := range map[string]string{"Missing": filepath.Join(dir, "nope.csv"), "Directory": dir} {
		t.Run(name, func(t *testing.T) {
			if _, err := Sniff(p, Options{}); err == nil {
				t.Error("no error")
			}
		})
	}
}
