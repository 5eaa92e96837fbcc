package export

import (
	"bytes"
	"fmt"
	"image/png"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"github.com/kinmap/kinmap/attention"
)

// idBreaks finds, in the page's elements that selector matches, the site
// ids (letters, a hyphen, digits) that the browser lays out on more than
// one line: a Range over an id's characters has one client rectangle per
// line box it spans (CSSOM View, Range.getClientRects).
const idBreaks = `(() => {
  const out = [];
  for (const el of document.querySelectorAll(%q)) {
    const walk = document.createTreeWalker(el, NodeFilter.SHOW_TEXT);
    for (let n = walk.nextNode(); n; n = walk.nextNode()) {
      for (const m of n.data.matchAll(/[A-Z]+-[0-9]+/g)) {
        const r = document.createRange();
        r.setStart(n, m.index);
        r.setEnd(n, m.index + m[0].length);
        const lines = new Set(Array.from(r.getClientRects()).map(b => Math.round(b.top)));
        if (lines.size > 1) out.push(m[0]);
      }
    }
  }
  return out;
})()`

// A regime's still row names every site that stays in it, which on a
// large fleet runs over many lines of the work list: the browser must
// wrap it between ids, never at the hyphen inside one (Debian chromium,
// headless, at a narrow and a wide viewport). The same ids are kept whole
// in the fleet-wide changes and the comparison with last week, and the
// page is no wider than the window.
func TestSiteIDsKeptWhole(t *testing.T) {
	r := fixtureRun()
	var ids []string
	for i := range 240 {
		ids = append(ids, fmt.Sprintf("PS-%04d", 7*i+1))
	}
	r.Attention = []attention.Row{{Rank: 1, Level: attention.Still, Sites: ids, To: 2,
		Reason: fmt.Sprintf("%d site(s) still in fault regime 2, unchanged since an earlier run reported their stay: %s", len(ids), strings.Join(ids, ", "))}}
	r.Shared[0].Sites = ids[:maxSharedSites]
	r.Against = &Comparison{From: day0.AddDate(0, 0, -7), To: day0, Period: "last week", Windows: 10,
		Then: map[int]float64{1: 1}, Now: map[int]float64{1: 1}, Silent: ids[:120], Back: ids[120:]}
	dir := t.TempDir()
	if err := Write(dir, r); err != nil {
		t.Fatal(err)
	}
	abs, err := filepath.Abs(filepath.Join(dir, ReportFile))
	if err != nil {
		t.Fatal(err)
	}
	ctx := chromiumContext(t, 90*time.Second)
	for _, width := range []int64{480, 1280} {
		if err := chromedp.Do(ctx, chromedp.EmulateViewport(width, 2000), chromedp.Navigate("file://"+abs)); err != nil {
			t.Fatalf("chromium: %v", err)
		}
		// The page itself never scrolls sideways: a table wider than a
		// narrow screen scrolls in its own box (CSSOM View: the root's
		// scrollWidth against the viewport's innerWidth).
		over, err := chromedp.Run(ctx, chromedp.Evaluate[int64]("document.documentElement.scrollWidth - window.innerWidth"))
		if err != nil {
			t.Fatalf("chromium: %v", err)
		}
		if over > 0 {
			t.Errorf("%d px wide: the page is %d px wider than the window", width, over)
		}
		for _, sel := range []string{"#attention td", "#shared td", "#lastweek p"} {
			broken, err := chromedp.Run(ctx, chromedp.Evaluate[[]string](fmt.Sprintf(idBreaks, sel)))
			if err != nil {
				t.Fatalf("chromium: %v", err)
			}
			if len(broken) > 0 {
				t.Errorf("%d px wide, %s: %d site ids break across lines, such as %q", width, sel, len(broken), broken[0])
			}
		}
		if width != 1280 {
			continue
		}
		shot, err := chromedp.Run(ctx, chromedp.Screenshot(chromedp.CSS("#attention")))
		if err != nil {
			t.Fatalf("chromium: %v", err)
		}
		if _, err := png.Decode(bytes.NewReader(shot)); err != nil {
			t.Fatal(err)
		}
		if out := os.Getenv("KINMAP_SHOT"); out != "" {
			if err := os.WriteFile(out, shot, 0o644); err != nil {
				t.Fatal(err)
			}
		}
	}
}

// siteText sets each listed id in a span, whole words only, and escapes
// the rest of the text.
func TestSiteText(t *testing.T) {
	tests := []struct {
		text string
		ids  []string
		want string
	}{
		{"3 site(s) still in regime 2: A-1, A-12, B&1.", []string{"A-1", "A-12", "B&1"},
			`3 site(s) still in regime 2: <span class="id">A-1</span>, <span class="id">A-12</span>, <span class="id">B&amp;1</span>.`},
		// A-1 is no id of the text "A-12" or "XA-1"; a word not listed is
		// left alone.
		{"XA-1 A-12 (A-1) fleet-wide", []string{"A-1"}, `XA-1 A-12 (<span class="id">A-1</span>) fleet-wide`},
		{"<b>", nil, "&lt;b&gt;"},
		{"", []string{"A-1"}, ""},
	}
	for _, tt := range tests {
		if got := string(siteText(tt.text, tt.ids)); got != tt.want {
			t.Errorf("siteText(%q, %q) =\n %s\nwant\n %s", tt.text, tt.ids, got, tt.want)
		}
	}
}
