package watch

import (
	"strconv"
	"testing"
)

// Source: ECMA-48 (5th ed., 1991) §5.4 for the CSI form (parameter bytes
// 0x30–0x3F, intermediates 0x20–0x2F, final 0x40–0x7E) and §8.3.89 for OSC
// ending in ST; BEL as an OSC terminator is common practice in terminals.
// Unicode bidirectional controls per Unicode UAX #9 (values from memory).
func TestSanitize(t *testing.T) {
	tests := []struct{ in, want string }{
		{"plain text 0.5", "plain text 0.5"},
		{"\x1b[31mred\x1b[0m", "red"},
		{"\x1b[1;38;5;196mbold\x1b[m", "bold"},
		{"a\x1b]0;title\x07b", "ab"},
		{"a\x1b]8;;http://x\x1b\\link\x1b]8;;\x1b\\b", "alinkb"},
		{"\x1bPdcs\x1b\\z", "z"},
		{"a\x1bcb", "ab"},
		{"a\x1b(Bb", "ab"},
		{"bell\x07 nul\x00 bs\x08 del\x7f", "bell nul bs del"},
		{"tab\there", "tab here"},
		{"csi8\u009b31mx", "csi8x"},
		{"c1\u0085x", "c1x"},
		{"bidi\u202eevil\u202c", "bidievil"},
		{"bad\xffutf8", "bad\ufffdutf8"},
		{"lone \xc2", "lone \ufffd"},
		{"unicode é ✓", "unicode é ✓"},
		{"\x1b[", ""},
		{"\x1b]unterminated", ""},
		{"cr\rlf\n", "cr lf "},
	}
	for _, tt := range tests {
		t.Run(strconv.Quote(tt.in), func(t *testing.T) {
			if got := Sanitize(tt.in); got != tt.want {
				t.Errorf("Sanitize(%q) = %q, want %q", tt.in, got, tt.want)
			}
		})
	}
}

func TestSanitize_PlainDoesNotAllocate(t *testing.T) {
	s := "epoch 3 - loss: 0.41 - val_loss: 0.52"
	if n := testing.AllocsPerRun(100, func() { _ = Sanitize(s) }); n != 0 {
		t.Errorf("%v allocations for plain text", n)
	}
}

func FuzzSanitize(f *testing.F) {
	for _, s := range []string{"plain", "\x1b[31mred\x1b[0m", "\x1b]8;;http://x\x07link\x1b]8;;\x07", "a\u202eb", "\xc2\x9b31m", "\xff\tz"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		out := Sanitize(s)
		if Sanitize(out) != out {
			t.Fatalf("Sanitize not idempotent on %q: %q", s, out)
		}
		for _, r := range out {
			if r < 0x20 || r == 0x7f || r >= 0x80 && r < 0xa0 || bidiControl(r) {
				t.Fatalf("Sanitize(%q) = %q keeps control %U", s, out, r)
			}
		}
	})
}

// bidiControl lists the Unicode bidirectional controls (UAX #9: embeddings,
// overrides, isolates and the implicit marks), written out here so the test
// does not trust the code it checks.
func bidiControl(r rune) bool {
	switch r {
	case 0x061c, 0x200e, 0x200f, 0x202a, 0x202b, 0x202c, 0x202d, 0x202e, 0x2066, 0x2067, 0x2068, 0x2069:
		return true
	}
	return false
}
