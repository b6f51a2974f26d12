package tui

import (
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// boostingRoles are the roles a boosting log leaves to a guess.
var boostingRoles = []diagnose.RoleGuess{
	{Column: "validation_0-error", Split: diagnose.SplitTrain, Source: "the first of several eval sets (validation_0) is commonly the training data"},
	{Column: "validation_1-error", Split: diagnose.SplitVal, Source: "the second eval set (validation_1) is commonly the validation data, after the training data"},
}

// TestStatus_StatesRoles: the status line names the roles assumed, the
// first in full and how many more; the help page lists each with what it
// rests on; text from the log is cleaned on the way.
func TestStatus_StatesRoles(t *testing.T) {
	tests := []struct {
		name       string
		roles      []diagnose.RoleGuess
		wantStatus string // "" for no roles part
	}{
		{"None", nil, ""},
		{"One", boostingRoles[:1], "assumed validation_0-error read as training"},
		{"Two", boostingRoles, "assumed validation_0-error read as training +1 (?)"},
		{"Hostile", []diagnose.RoleGuess{{Column: "te\x1b[2Jst_acc\u202e", Split: diagnose.SplitVal, Source: "a guess\x1b]0;t\x07"}},
			"assumed test_acc read as validation"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			m := newTestModel(t, 160, 40, Options{})
			src := liveSource(37)
			src.Roles = tt.roles
			m = settle(t, send(t, m, FeedMsg{Points: goldenRun.points(), Source: src}))
			status := strings.SplitN(m.View(), "\n", 2)[0]
			if tt.wantStatus == "" {
				if strings.Contains(status, "assumed") {
					t.Errorf("status %q states roles, none were assumed", status)
				}
				return
			}
			if !strings.Contains(status, tt.wantStatus) {
				t.Errorf("status %q lacks %q", status, tt.wantStatus)
			}
			help := press(t, m, "?").View()
			if strings.ContainsAny(help, "\x1b\x07\u202e") {
				t.Fatalf("hostile text reached the screen: %q", help)
			}
			for _, g := range tt.roles {
				want := clean(g.Column) + " read as " + g.Split.Phrase()
				if !strings.Contains(help, want) || !strings.Contains(help, "roles assumed") {
					t.Errorf("the help page lacks %q:\n%s", want, help)
				}
			}
		})
	}
}

// TestView_GoldenRoles: the help page with the roles assumed, and the
// status line at 80 columns, where the roles give way before the epoch.
func TestView_GoldenRoles(t *testing.T) {
	for _, tt := range []struct {
		name string
		w, h int
		keys []string
	}{
		{"roles_help_100x30", 100, 30, []string{"?"}},
		{"roles_status_80x24", 80, 24, nil},
	} {
		t.Run(tt.name, func(t *testing.T) {
			m := newTestModel(t, tt.w, tt.h, Options{})
			src := liveSource(37)
			src.Format = "rounds"
			src.Roles = boostingRoles
			m = settle(t, send(t, m, FeedMsg{Points: goldenRun.points(), Steps: goldenRun.steps(), Source: src}))
			m = press(t, m, tt.keys...)
			v := m.View()
			checkFits(t, v, tt.w, tt.h)
			golden(t, tt.name, v)
		})
	}
}
