package tui

import (
	"strings"
	"testing"
	"unicode/utf8"
)

func TestClean(t *testing.T) {
	tests := []struct {
		name, in, want string
	}{
		{"PlainStaysPlain", "val_loss", "val_loss"},
		{"SGRColourRemovedWhole", "lo\x1b[31mss\x1b[0m", "loss"},
		{"CursorMoveRemoved", "a\x1b[2J\x1b[Hb", "ab"},
		{"OSCTitleWithBEL", "x\x1b]0;owned\x07y", "xy"},
		{"OSCHyperlinkWithST", "\x1b]8;;http://example.invalid\x1b\\link\x1b]8;;\x1b\\", "link"},
		{"DCSString", "a\x1bPq#0;2;0;0;0\x1b\\b", "ab"},
		{"TwoByteEscape", "a\x1bcb", "ab"},
		{"CharsetEscape", "a\x1b(Bb", "ab"},
		{"UnterminatedCSI", "a\x1b[31", "a"},
		{"C1CSI", "a\u009b31mb", "ab"},
		{"C1OSC", "a\u009d0;t\u0007b", "ab"},
		{"ControlsDropped", "a\x00\x07\x08\x7fb", "ab"},
		{"TabsAndNewlinesBecomeSpaces", "a\tb\nc\r", "a b c "},
		{"BidiOverrideDropped", "abc\u202edcba\u202c", "abcdcba"},
		{"InvalidUTF8Replaced", "a\xffb", "a\ufffdb"},
		{"WideRunesKept", "損失", "損失"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := clean(tt.in); got != tt.want {
				t.Errorf("clean(%q) = %q, want %q", tt.in, got, tt.want)
			}
		})
	}
}

func TestClean_CapsLength(t *testing.T) {
	for _, in := range []string{strings.Repeat("a", 10000), strings.Repeat("é", 10000)} {
		got := clean(in)
		if n := utf8.RuneCountInString(got); n > maxTextRunes+1 {
			t.Errorf("clean of %d runes kept %d, want at most %d", utf8.RuneCountInString(in), n, maxTextRunes+1)
		}
	}
}

// FuzzClean checks that nothing clean returns can drive a terminal: no
// ESC, no C0 or C1 control, no DEL, no bidi control, valid UTF-8.
func FuzzClean(f *testing.F) {
	for _, s := range []string{"val_loss", "\x1b[31mred", "\x1b]0;t\x07", "a\u009bb", "\xff\xfe", "\u202e"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		got := clean(s)
		if !utf8.ValidString(got) {
			t.Fatalf("clean(%q) = %q: invalid UTF-8", s, got)
		}
		for _, r := range got {
			if r < 0x20 || r == 0x7f || (r >= 0x80 && r < 0xa0) || bidiControl(r) {
				t.Fatalf("clean(%q) = %q: keeps control %U", s, got, r)
			}
		}
		if clean(got) != got {
			t.Fatalf("clean is not idempotent on %q: %q then %q", s, got, clean(got))
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
