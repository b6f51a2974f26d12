package layout

import (
	"fmt"
	"strings"
	"testing"
)

// TestReadAll_LongRedrawnLine: a console line whose progress bar was
// redrawn over it for more than 1 MiB before its last carriage return
// still gives the epoch's values printed after it, whichever way the
// bytes arrive, and is never held whole; a line over 1 MiB after its last
// carriage return is skipped as before.
func TestReadAll_LongRedrawnLine(t *testing.T) {
	var bar strings.Builder
	for i := 0; bar.Len() < 3<<20; i++ {
		fmt.Fprintf(&bar, "\rEpoch 2/3: %3d%%|%s| %d/40000 [loss=0.41]", i*100/40000, strings.Repeat("#", i%20), i)
	}
	head := "Epoch 1/3 - loss: 0.9000 - val_loss: 0.9500\n"
	redrawn := bar.String() + "\rEpoch 2/3 - loss: 0.4000 - val_loss: 0.5000\n"
	tail := "Epoch 3/3 - loss: 0.3000 - val_loss: 0.4500\n"
	tests := []struct {
		name        string
		in          string
		wantEpochs  []int
		wantVal     float64 // of epoch 2; 0 when it has none
		wantSkipped int
	}{
		{"RedrawnThenValues", head + redrawn + tail, []int{1, 2, 3}, 0.5, 0},
		{"RedrawnLastLineNoNewline", head + strings.TrimSuffix(redrawn, "\n"), []int{1, 2}, 0.5, 0},
		{"LongAfterLastReturn", head + "\r" + strings.Repeat("y", 2<<20) + " loss: 0.4\n" + tail, []int{1, 3}, 0, 1},
	}
	for _, tt := range tests {
		for _, size := range []int{len(tt.in), 64 << 10, 4093} {
			t.Run(fmt.Sprintf("%s/%d", tt.name, size), func(t *testing.T) {
				r, o := newTestReader(Config{})
				maxCarry := 0
				for p := []byte(tt.in); len(p) > 0; {
					n := min(size, len(p))
					r.Feed(p[:n])
					p = p[n:]
					maxCarry = max(maxCarry, cap(r.carry))
				}
				r.End()
				var list = o.points[:0:0]
				for _, p := range o.points {
					list = appendPoint(list, p)
				}
				c := r.Counts()
				if maxCarry > 2*maxLineBytes {
					t.Errorf("held %d bytes of a long line", maxCarry)
				}
				if got := epochs(list); fmt.Sprint(got) != fmt.Sprint(tt.wantEpochs) {
					t.Fatalf("epochs %v, want %v (format %s, skipped %d, examples %v)", got, tt.wantEpochs, c.Format, c.Skipped, c.Examples)
				}
				if c.Skipped != tt.wantSkipped || c.Lines != strings.Count(tt.in, "\n")+boolInt(!strings.HasSuffix(tt.in, "\n")) {
					t.Errorf("lines %d skipped %d, want %d skipped", c.Lines, c.Skipped, tt.wantSkipped)
				}
				if tt.wantVal != 0 {
					if v, _ := sample(t, list[1], "val_loss"); v != tt.wantVal {
						t.Errorf("epoch 2 val_loss %v, want %v", v, tt.wantVal)
					}
				}
			})
		}
	}
}

func boolInt(b bool) int {
	if b {
		return 1
	}
	return 0
}
