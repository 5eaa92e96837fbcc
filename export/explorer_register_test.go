package export

import (
	"path/filepath"
	"testing"
	"time"
)

// The explorer draws itself for a run without a register, where the sites
// have no attributes: its data gives an empty list of attribute names,
// not null, which the page's script would fail on before it is ready.
func TestExplorerWithoutRegister(t *testing.T) {
	ctx := chromiumContext(t, 60*time.Second)
	dir := t.TempDir()
	r := fixtureRun()
	r.Register = nil
	if err := Write(dir, r); err != nil {
		t.Fatal(err)
	}
	if _, err := openExplorer(ctx, filepath.Join(dir, ReportFile)); err != nil {
		t.Fatalf("chromium: the explorer did not get ready: %v", err)
	}
	if heading, err := openSitePage(ctx, "PS-01"); err != nil || heading != "Site PS-01" {
		t.Errorf("after #site=PS-01 the site page is %q (%v)", heading, err)
	}
}
