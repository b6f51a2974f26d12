package forecast

import (
	"encoding/json"
	"math"
	"testing"
)

// curveFromBytes decodes a fuzzer's bytes into a curve: a flag byte
// (bit 0 fraction, bit 1 learning rates, bit 2 an announced total, bits
// 3–5 a power of ten for the scale of a loss, bit 6 epochs that repeat),
// then two bytes per value (0xFF 0x00–0x05 are NaN, ±Inf, ±1e308 and 0),
// and two more per learning rate when bit 1 is set.
func curveFromBytes(b []byte) Curve {
	if len(b) == 0 {
		return Curve{}
	}
	flags := b[0]
	b = b[1:]
	c := Curve{Fraction: flags&1 != 0}
	scale := math.Pow(10, float64(int(flags>>3&7)-3))
	special := []float64{math.NaN(), math.Inf(1), math.Inf(-1), 1e308, -1e308, 0}
	step := 2
	if flags&2 != 0 {
		step = 4
		c.LR = []float64{}
	}
	for i := 0; i+step <= len(b); i += step {
		var v float64
		if b[i] == 0xFF && int(b[i+1]) < len(special) {
			v = special[b[i+1]]
		} else {
			v = float64(uint16(b[i])<<8|uint16(b[i+1])) / 65535
			if !c.Fraction {
				v *= scale
			}
		}
		c.Values = append(c.Values, v)
		if c.LR != nil {
			c.LR = append(c.LR, float64(uint16(b[i+2])<<8|uint16(b[i+3]))/65535)
		}
	}
	if flags&64 != 0 {
		c.Epochs = make([]int, len(c.Values))
		for i := range c.Epochs {
			c.Epochs[i] = i/3 + 1 // each epoch three times: restarts
		}
	}
	if flags&4 != 0 {
		c.Total = 2*len(c.Values) + 1
	}
	return c
}

// FuzzEpochs checks that no curve makes a forecast panic, hang or give
// numbers out of order, infinite, or without an interval.
func FuzzEpochs(f *testing.F) {
	ramp := []byte{5}
	for i := 0; i < 40; i++ {
		v := uint16(60000 / (i + 2))
		ramp = append(ramp, byte(v>>8), byte(v))
	}
	f.Add(ramp)
	f.Add([]byte{1, 0xFF, 0, 0xFF, 1, 0xFF, 2})
	f.Add(append([]byte{7}, make([]byte, 80)...)) // constant zero with learning rates
	f.Add(append(append([]byte{1}, ramp[1:]...), 0xFF, 3, 0xFF, 4))
	f.Add(append([]byte{64 | 1}, ramp[1:]...))
	f.Fuzz(func(t *testing.T, b []byte) {
		c := curveFromBytes(b)
		fc := Epochs(c, Options{})
		if _, err := json.Marshal(fc); err != nil {
			t.Fatalf("JSON: %v", err)
		}
		if fc.Phrase() == "" {
			t.Fatal("empty phrase")
		}
		if fc.Status != OK {
			if fc.Reason == "" {
				t.Fatalf("status %v without a reason", fc.Status)
			}
			return
		}
		for name, iv := range map[string]Interval{"at": fc.At, "change": fc.Change, "plateau": fc.Plateau} {
			if !finite(iv.Value) || !finite(iv.Lo) || !finite(iv.Hi) || !(iv.Lo <= iv.Value && iv.Value <= iv.Hi) {
				t.Fatalf("%s interval %+v for %v", name, iv, c.Values)
			}
		}
		if c.Fraction && (fc.At.Lo < 0 || fc.At.Hi > 1) {
			t.Fatalf("rate interval %+v", fc.At)
		}
		if fc.Target <= fc.LastEpoch {
			t.Fatalf("target %d not after %d", fc.Target, fc.LastEpoch)
		}
	})
}

// FuzzData checks the data forecast the same way.
func FuzzData(f *testing.F) {
	f.Add([]byte{1, 0, 100, 0x40, 0, 0, 200, 0x30, 0, 1, 0x90, 0x20, 0, 3, 0x20, 0x18, 0, 6, 0x40, 0x14})
	f.Add([]byte{0, 0, 1, 0xFF, 0xFF, 0, 1, 0, 0})
	f.Fuzz(func(t *testing.T, b []byte) {
		var pts []SizePoint
		frac := len(b) > 0 && b[0]&1 != 0
		for i := 1; i+4 <= len(b); i += 4 {
			m := float64(uint16(b[i])<<8 | uint16(b[i+1]))
			v := float64(uint16(b[i+2])<<8|uint16(b[i+3])) / 65535
			pts = append(pts, SizePoint{Size: m, Value: v})
		}
		d := Data(pts, DataOptions{Fraction: frac, Target: 0.05})
		if _, err := json.Marshal(d); err != nil {
			t.Fatal(err)
		}
		if d.Phrase() == "" {
			t.Fatal("empty phrase")
		}
		if d.Status == OK {
			for name, iv := range map[string]Interval{"a": d.A, "b": d.B, "floor": d.Floor, "doubled": d.Doubled, "gain": d.Gain} {
				if !finite(iv.Value) || !(iv.Lo <= iv.Value && iv.Value <= iv.Hi) {
					t.Fatalf("%s interval %+v for %v", name, iv, pts)
				}
			}
		}
	})
}
