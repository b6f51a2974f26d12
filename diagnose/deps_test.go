package diagnose

import (
	"os/exec"
	"strings"
	"testing"
)

// TestImportArrows keeps the domain pure: diagnose and report import no
// terminal, screen or file-watching package (house style: arrows point
// inward).
func TestImportArrows(t *testing.T) {
	if testing.Short() {
		t.Skip("runs go list")
	}
	out, err := exec.Command("go", "list", "-deps", "github.com/fitgap/fitgap/diagnose", "github.com/fitgap/fitgap/report").CombinedOutput()
	if err != nil {
		t.Skipf("go list unavailable: %v: %s", err, out)
	}
	for _, dep := range strings.Fields(string(out)) {
		for _, banned := range []string{"github.com/charmbracelet/", "github.com/fsnotify/", "github.com/NimbleMarkets/", "github.com/fitgap/fitgap/watch", "github.com/fitgap/fitgap/tui", "os/exec", "net"} {
			if dep == banned || strings.HasPrefix(dep, banned) && strings.HasSuffix(banned, "/") || strings.HasPrefix(dep, banned+"/") {
				t.Errorf("diagnose or report depends on %s", dep)
			}
		}
	}
}
