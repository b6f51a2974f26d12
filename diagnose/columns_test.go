package diagnose

import (
	"encoding/binary"
	"math"
	"slices"
	"strconv"
	"testing"
)

// same reports whether two stored values are the same to the bit (any NaN
// is stored as math.NaN()).
func same(a, b float64) bool {
	if a != a && b != b {
		return true
	}
	return math.Float64bits(a) == math.Float64bits(b)
}

// TestFloatColumn_Exact stores values of every kind and reads each back to
// the bit, and checks which chunks stay decimal (4 bytes a value).
func TestFloatColumn_Exact(t *testing.T) {
	parse := func(s string) float64 {
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatal(err)
		}
		return v
	}
	tests := []struct {
		name    string
		vals    []float64
		decimal bool // the chunk stays decimal
	}{
		{"PrintedDecimals", []float64{parse("0.549255"), parse("2.3"), parse("0.1"), parse("1e-6"), parse("-0.25"), 0, 17}, true},
		{"NonFiniteStayDecimal", []float64{parse("0.5"), math.NaN(), math.Inf(1), math.Inf(-1)}, true},
		{"ScaleRisesForMoreDecimals", []float64{1, 2, parse("0.123456789")}, true},
		{"ATwoThirdWidens", []float64{parse("0.5"), 2.0 / 3}, false},
		{"NegativeZeroWidens", []float64{parse("0.5"), math.Copysign(0, -1)}, false},
		{"TooManyDigitsWidens", []float64{parse("123456.789012")}, false},
		{"RescaleOverflowWidens", []float64{300_000_000, parse("0.5")}, false},
		{"HugeWidens", []float64{1e300, -math.MaxFloat64, math.SmallestNonzeroFloat64}, false},
		{"NaNPayloadIsCanonical", []float64{math.Float64frombits(0x7ff8_0000_0000_0abc)}, true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var c floatColumn
			for i, v := range tc.vals {
				c.set(2*i, v) // odd positions stay absent
			}
			for i, v := range tc.vals {
				got, ok := c.at(2 * i)
				if !ok || !same(got, v) {
					t.Errorf("at(%d) = %v (%#x), %v; want %v (%#x)", 2*i, got, math.Float64bits(got), ok, v, math.Float64bits(v))
				}
				if _, ok := c.at(2*i + 1); ok {
					t.Errorf("at(%d) is set; nothing was stored there", 2*i+1)
				}
			}
			if dec := c.chunks[0].dec != nil; dec != tc.decimal {
				t.Errorf("decimal chunk %v, want %v", dec, tc.decimal)
			}
		})
	}
}

// TestFloatColumn_AllPrintedDecimals: every value a script prints with up
// to six decimals in [-1000, 1000] is kept as a decimal and read back to
// the bit (a sample of 200 000 of them, and the edges).
func TestFloatColumn_AllPrintedDecimals(t *testing.T) {
	var c floatColumn
	n := 0
	check := func(d int64) {
		v, err := strconv.ParseFloat(strconv.FormatFloat(float64(d)/1e6, 'f', 6, 64), 64)
		if err != nil {
			t.Fatal(err)
		}
		c.set(n%chunkLen, v)
		if got, ok := c.at(n % chunkLen); !ok || !same(got, v) {
			t.Fatalf("%d·10⁻⁶: got %v, want %v", d, got, v)
		}
		if c.chunks[0].dec == nil {
			t.Fatalf("%d·10⁻⁶ widened the chunk", d)
		}
		n++
	}
	for d := int64(-1_000_000_000); d <= 1_000_000_000; d += 10_007 {
		check(d)
	}
	for _, d := range []int64{-2_147_483_000, -1, 0, 1, 999_999, 2_147_483_647} {
		check(d)
	}
}

func TestFloatColumn_Truncate(t *testing.T) {
	for _, n := range []int{0, 1, chunkLen - 1, chunkLen, chunkLen + 1, 3 * chunkLen} {
		var c floatColumn
		for i := 0; i < 3*chunkLen; i++ {
			v := float64(i) / 4
			if i%7 == 0 {
				v = 1.0 / 3 // some chunks widen
			}
			c.set(i, v)
		}
		c.truncate(n)
		for i := 0; i < 3*chunkLen; i++ {
			if _, ok := c.at(i); ok != (i < n) {
				t.Fatalf("truncate(%d): at(%d) set = %v", n, i, ok)
			}
		}
	}
}

// FuzzFloatColumn stores values from arbitrary bytes at arbitrary places,
// with truncations, and compares every read with a plain map.
func FuzzFloatColumn(f *testing.F) {
	f.Add([]byte{0, 0, 0, 0, 0, 0, 0, 0xe0, 0x3f, 1, 0, 0, 0, 0, 0, 0, 0xf8, 0x7f})
	f.Add([]byte{2, 0x9a, 0x99, 0x99, 0x99, 0x99, 0x99, 0xb9, 0x3f, 0xff})
	f.Fuzz(func(t *testing.T, data []byte) {
		var c floatColumn
		want := map[int]float64{}
		for len(data) >= 9 {
			i := int(data[0]) * 37 % (3 * chunkLen)
			v := math.Float64frombits(binary.LittleEndian.Uint64(data[1:9]))
			data = data[9:]
			if cut := len(data) > 0 && data[0] == 0xff; cut {
				c.truncate(i)
				for k := range want {
					if k >= i {
						delete(want, k)
					}
				}
				continue
			}
			c.set(i, v)
			want[i] = v
		}
		for i := 0; i < 3*chunkLen; i++ {
			got, ok := c.at(i)
			w, wok := want[i]
			if ok != wok || ok && !same(got, w) {
				t.Fatalf("at(%d) = %v %v, want %v %v", i, got, ok, w, wok)
			}
		}
	})
}

func TestIntColumn(t *testing.T) {
	const (
		even    = "even steps"
		offsets = "offsets"
		plain   = "plain values"
	)
	tests := []struct {
		name string
		vals []int
		kind string // how the chunk keeps them
	}{
		{"EvenEpochs", []int{1, 2, 3, 4, 5}, even},
		{"EvenLines", []int{2, 5, 8, 11}, even},
		{"Epochs", []int{1, 2, 3, 5, 8}, offsets},
		{"LinesGoBack", []int{1000, 2000, 2, 3}, offsets},
		{"FarApartWidens", []int{0, math.MaxInt32 + 1, 5}, plain},
		{"ExtremesWiden", []int{math.MaxInt, math.MinInt, 0}, plain},
		{"ExtremesStepEvenly", []int{math.MaxInt, math.MinInt}, even},
		{"NegativeEpochs", []int{-5, -4, -3}, even},
		{"OneValue", []int{7}, even},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var c intColumn
			for i, v := range tc.vals {
				c.set(i, v)
			}
			for i, v := range tc.vals {
				if got := c.at(i); got != v {
					t.Errorf("at(%d) = %d, want %d", i, got, v)
				}
			}
			kind := even
			if ch := c.chunks[0]; ch.off != nil {
				kind = offsets
			} else if ch.wide != nil {
				kind = plain
			}
			if kind != tc.kind {
				t.Errorf("kept as %s, want %s", kind, tc.kind)
			}
		})
	}
}

// TestIntColumn_Truncate cuts a column of even steps and of offsets and
// sets other values after the cut: every value reads back as set.
func TestIntColumn_Truncate(t *testing.T) {
	for _, tc := range []struct {
		name       string
		vals, then []int
	}{
		{"EvenThenEven", []int{1, 2, 3, 4, 5}, []int{3, 4}},
		{"EvenThenUneven", []int{1, 2, 3, 4, 5}, []int{30, 31}},
		{"UnevenThenEven", []int{1, 4, 9, 16}, []int{5, 6, 7}},
		{"PastAChunk", nil, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			vals, then := tc.vals, tc.then
			if vals == nil {
				for i := range chunkLen + 5 {
					vals = append(vals, 10+i)
				}
				then = []int{1, 2}
			}
			var c intColumn
			for i, v := range vals {
				c.set(i, v)
			}
			cut := len(vals) - 3
			c.truncate(cut)
			want := append(slices.Clone(vals[:cut]), then...)
			for i, v := range then {
				c.set(cut+i, v)
			}
			for i, v := range want {
				if got := c.at(i); got != v {
					t.Fatalf("at(%d) = %d, want %d", i, got, v)
				}
			}
		})
	}
}

// TestFloatColumn_Room checks that a column's room follows the values set:
// a batch announced with setAhead gets exactly its room, values set one at
// a time leave at most a quarter of it empty, and a position past the
// values set, or cut by truncate, reads as absent. Source: design choice
// (columns.go, growth).
func TestFloatColumn_Room(t *testing.T) {
	tests := []struct {
		name    string
		n, end  int // values set; end announced (0: none)
		maxRoom int
	}{
		{"BatchAnnounced", 300, 300, 300},
		{"OneAtATime", 300, 0, 300 + 300/growthDiv},
		{"Short", 3, 0, minGrowth},
		{"PastAChunk", chunkLen + 10, chunkLen + 10, 10},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var c floatColumn
			var e intColumn
			for i := range tc.n {
				c.setAhead(i, float64(i)/4, tc.end)
				e.setAhead(i, i+1, tc.end)
			}
			last := c.chunks[len(c.chunks)-1]
			if room := cap(last.dec.m); room > tc.maxRoom || room < tc.n%chunkLen {
				t.Errorf("room of the last chunk %d, want %d to %d", room, tc.n%chunkLen, tc.maxRoom)
			}
			if room := cap(e.chunks[len(e.chunks)-1].off); room > tc.maxRoom {
				t.Errorf("room of the last epoch chunk %d, want at most %d", room, tc.maxRoom)
			}
			for i := range tc.n {
				if v, ok := c.at(i); !ok || v != float64(i)/4 || e.at(i) != i+1 {
					t.Fatalf("at(%d) = %v, %v, %d", i, v, ok, e.at(i))
				}
			}
			if _, ok := c.at(tc.n); ok {
				t.Errorf("at(%d) is set past the values", tc.n)
			}
			c.truncate(tc.n - 2)
			c.set(tc.n, 1)
			if _, ok := c.at(tc.n - 1); ok {
				t.Errorf("at(%d) is set after truncate(%d)", tc.n-1, tc.n-2)
			}
		})
	}
}

// FuzzIntColumn appends values from arbitrary bytes in order, as the
// history does (some continuing the last step, some anywhere), with
// truncations, and compares every read with a plain slice.
func FuzzIntColumn(f *testing.F) {
	f.Add([]byte{1, 1, 0, 0, 0, 0, 0, 0, 0, 1, 2, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0xff, 1, 0, 0, 0, 0, 0, 0, 0})
	f.Add([]byte{1, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0x7f, 1, 0, 0, 0, 0, 0, 0, 0, 0x80, 0, 0, 0, 0, 0, 0, 0, 0, 0})
	f.Fuzz(func(t *testing.T, data []byte) {
		var c intColumn
		var want []int
		for len(data) >= 9 {
			op, v := data[0], int(int64(binary.LittleEndian.Uint64(data[1:9])))
			data = data[9:]
			switch {
			case op == 0xff:
				n := int(uint(v) % uint(len(want)+1))
				c.truncate(n)
				want = want[:n]
				continue
			case op&3 == 0 && len(want) >= 2:
				v = 2*want[len(want)-1] - want[len(want)-2] // the same step again
			case op&3 == 2:
				// A long run of even steps, past a chunk's end.
				for range int(op) * 5 {
					if len(want) < 2 {
						break
					}
					w := 2*want[len(want)-1] - want[len(want)-2]
					c.set(len(want), w)
					want = append(want, w)
				}
			}
			c.set(len(want), v)
			want = append(want, v)
		}
		for i, w := range want {
			if got := c.at(i); got != w {
				t.Fatalf("at(%d) = %d, want %d", i, got, w)
			}
		}
	})
}

// TestFloatColumn_SmallBatchesGrowByAQuarter: a live run sends a point or
// two a batch, each announced; the chunk must still grow by a quarter, not
// to each batch's end (a copy of the chunk at every batch).
func TestFloatColumn_SmallBatchesGrowByAQuarter(t *testing.T) {
	var c floatColumn
	grows, room := 0, 0
	for i := 0; i < chunkLen; i += 2 {
		c.setAhead(i, 0.5, i+2)
		c.setAhead(i+1, 0.25, i+2)
		if r := cap(c.chunks[0].dec.m); r != room {
			grows, room = grows+1, r
		}
	}
	// 16 → 1,024 by quarters is 19 steps; a copy per batch would be 512.
	if grows > 25 {
		t.Errorf("the chunk grew %d times over %d batches of 2", grows, chunkLen/2)
	}
}
