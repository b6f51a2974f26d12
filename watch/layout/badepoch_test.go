package layout

import (
	"fmt"
	"strings"
	"testing"
)

// TestReadAll_ImpossibleEpochs: a row whose epoch no run can have (beyond
// a billion, beyond float64, 2^63, a total of epochs that is no integer)
// is a bad line, counted and kept as an example; it neither merges into
// the epoch before it nor sets a total.
func TestReadAll_ImpossibleEpochs(t *testing.T) {
	tests := []struct {
		name, in   string
		wantEpochs []int
		wantTotal  int // of the last point
		bad        int
	}{
		{"CSVOverflow", "epoch,loss,val_loss\n1,0.5,0.6\n2,0.4,0.5\n1e400,0.3,0.4\n3,0.2,0.3\n", []int{1, 2, 3}, 0, 1},
		{"CSVTwoTo63", "epoch,loss,val_loss\n1,0.5,0.6\n2,0.4,0.5\n9223372036854775808,9,9\n", []int{1, 2}, 0, 1},
		{"CSVNegativeOverflow", "epoch,loss,val_loss\n1,0.5,0.6\n-1e400,9,9\n2,0.4,0.5\n", []int{1, 2}, 0, 1},
		{"JSONLines", "{\"epoch\":1,\"loss\":0.5,\"val_loss\":0.6}\n{\"epoch\":1e400,\"loss\":9,\"val_loss\":9}\n{\"epoch\":2,\"loss\":0.4,\"val_loss\":0.5}\n", []int{1, 2}, 0, 1},
		{"TextTotal", "Epoch 1/10 - loss: 0.5 - val_loss: 0.6\nEpoch 5/1e400 - loss: 9 - val_loss: 9\n", []int{1}, 10, 1},
		{"TextTotalDecimal", "Epoch 1/10 - loss: 0.5 - val_loss: 0.6\nEpoch 2/1.5 - loss: 9 - val_loss: 9\n", []int{1}, 10, 1},
		{"TextEpochDigits", "Epoch 1/10 - loss: 0.5 - val_loss: 0.6\nEpoch 12345678901 - loss: 9 - val_loss: 9\n", []int{1}, 10, 1},
		{"TextEpochPair", "epoch: 1, loss: 0.5, val_loss: 0.6\nepoch: 1e400, loss: 9, val_loss: 9\nepoch: 2, loss: 0.4, val_loss: 0.5\n", []int{1, 2}, 0, 1},
		{"TextFractionalEpochIsFine", "Epoch 1/10 - loss: 0.5 - val_loss: 0.6\nEpoch 2/10 - loss: 0.4 - val_loss: 0.5\n", []int{1, 2}, 10, 0},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			pts, c := readString(t, tt.in, Config{})
			if fmt.Sprint(epochs(pts)) != fmt.Sprint(tt.wantEpochs) {
				t.Fatalf("epochs %v, want %v (format %s)", epochs(pts), tt.wantEpochs, c.Format)
			}
			if c.Skipped != tt.bad {
				t.Fatalf("skipped %d, want %d: %v", c.Skipped, tt.bad, c.Examples)
			}
			if tt.bad > 0 && !strings.Contains(c.Examples[0].Reason, "impossible epoch") {
				t.Errorf("example %v does not say why", c.Examples[0])
			}
			for _, p := range pts {
				if v, _ := sample(t, p, "val_loss"); v == 9 {
					t.Errorf("epoch %d took the bad row's values", p.Epoch)
				}
			}
			if last := pts[len(pts)-1]; last.Total != tt.wantTotal {
				t.Errorf("total %d, want %d", last.Total, tt.wantTotal)
			}
		})
	}
}
