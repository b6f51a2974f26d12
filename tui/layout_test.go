package tui

import "testing"

func TestComputeLayout(t *testing.T) {
	tests := []struct {
		name          string
		w, h          int
		nSpark, nWarn int
		want          mode
	}{
		{"ZeroByZero", 0, 0, 3, 1, modeEmpty},
		{"OneByOne", 1, 1, 3, 1, modeCompact},
		{"Narrow", 59, 40, 3, 1, modeCompact},
		{"Short", 120, 15, 3, 1, modeCompact},
		{"Classic80x24", 80, 24, 4, 2, modeStacked},
		{"SmallestStacked", 60, 16, 4, 2, modeStacked},
		{"Wide120x40", 120, 40, 4, 2, modeWide},
		{"Wide200x60", 200, 60, 20, 5, modeWide},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			for _, fc := range []bool{false, true} {
				l := computeLayout(tt.w, tt.h, tt.nSpark, tt.nWarn, fc)
				if l.mode != tt.want {
					t.Fatalf("computeLayout(%d, %d) mode = %v, want %v", tt.w, tt.h, l.mode, tt.want)
				}
				checkLayout(t, l, tt.w, tt.h)
			}
		})
	}
}

// checkLayout asserts that the regions fit the screen.
func checkLayout(t *testing.T, l layout, w, h int) {
	t.Helper()
	switch l.mode {
	case modeStacked:
		rows := 2 + l.chartH + l.sparkRows + l.verdictRows + l.warnRows
		if rows > h || l.chartH < minChartH-1 {
			t.Errorf("%dx%d stacked: %d rows (chart %d), want ≤ %d", w, h, rows, l.chartH, h)
		}
	case modeWide:
		rows := 2 + l.chartH + l.sparkRows + l.warnRows
		if rows > h || l.mainW+2+l.sideW > w || l.chartH < minChartH {
			t.Errorf("%dx%d wide: %d rows, %d+%d cols, chart %d", w, h, rows, l.mainW, l.sideW, l.chartH)
		}
	}
	if l.sparkCols > 0 && l.sparkW*l.sparkCols > l.mainW {
		t.Errorf("%dx%d: %d sparkline columns of %d exceed %d", w, h, l.sparkCols, l.sparkW, l.mainW)
	}
}

// TestComputeLayout_AllSizes walks every size up to 220×70.
func TestComputeLayout_AllSizes(t *testing.T) {
	for w := 0; w <= 220; w++ {
		for h := 0; h <= 70; h++ {
			for _, n := range []int{0, 1, 7, 40} {
				checkLayout(t, computeLayout(w, h, n, n/2, n%2 == 1), w, h)
			}
		}
	}
}
