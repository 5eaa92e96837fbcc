package export

import (
	"bytes"
	"context"
	"encoding/base64"
	"fmt"
	"html"
	"image"
	"image/png"
	"maps"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
)

// The report loads nothing: no scripts, style sheets or fonts from
// anywhere, and every src or href is a data: URI or a fragment. Its three
// script elements are inline: the explorer's data, its script, which
// opens no connection, and the sites' daily readings.
func TestReportSelfContained(t *testing.T) {
	doc := string(read(t, written(t), ReportFile))
	for _, bad := range []string{"http://", "https://", "<link", "@import", "<iframe", "<object", "<embed",
		"fetch(", "xmlhttprequest", "websocket", "eventsource", "sendbeacon", "import(", "worker(", "<base"} {
		if strings.Contains(strings.ToLower(doc), bad) {
			t.Errorf("report contains %q", bad)
		}
	}
	scripts := regexp.MustCompile(`(?i)<script[^>]*>`).FindAllString(doc, -1)
	if want := []string{`<script type="application/json" id="kinmap-data">`, `<script>`, `<script type="application/json" id="kinmap-daily">`}; !slices.Equal(scripts, want) {
		t.Errorf("script elements %q, want %q", scripts, want)
	}
	for _, m := range regexp.MustCompile(`(?i)\b(src|href|srcset|poster|data)\s*=\s*"([^"]*)"`).FindAllStringSubmatch(doc, -1) {
		if !strings.HasPrefix(m[2], "data:image/png;base64,") && !strings.HasPrefix(m[2], "#") {
			t.Errorf("%s=%.60q loads something", m[1], m[2])
		}
	}
	for _, m := range regexp.MustCompile(`(?i)url\(([^)]*)\)`).FindAllStringSubmatch(doc, -1) {
		if !strings.HasPrefix(strings.Trim(m[1], `'" `), "data:") {
			t.Errorf("CSS url(%s) loads something", m[1])
		}
	}
}

func TestReportContents(t *testing.T) {
	dir := written(t)
	doc := string(read(t, dir, ReportFile))
	for _, want := range []string{
		"<title>Week 10 &lt;test&gt;</title>", // escaped by html/template
		"not a protective or control function",
		"defer to site safety procedures and local codes",
		"low load &lt;idle&gt; &amp; quiet",                        // regime description, escaped
		"<td class=\"id\">PS-01</td><td>2025-03-04 00:00 UTC</td>", // the switch table
		"<td class=\"id\">T-7</td><td>2025-03-03 00:00 UTC</td>",
		"1 of 18 windows are unlike",
		"<td class=\"id\">X-9</td><td class=\"num\">1</td>",
		"site &#34;X-9&#34; has no position",  // a warning of the export
		"3 readings out of order were sorted", // a warning of the run
		"week10.parquet (parquet, 5000 rows)",
		"<td>4 × 4 units</td>", "<td>torus, wraps both ways</td>",
		"&#34;command&#34;: &#34;kinmap train&#34;", // run.json in the details
	} {
		if !strings.Contains(doc, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	if !strings.Contains(html.UnescapeString(doc), "<td>vibration.p95 +2.1σ, flow.mean −1.4σ</td>") {
		t.Error("report lacks the description of regime 2")
	}
	// Every picture is inline, as a PNG that decodes, with its title.
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var pngs int
	for _, e := range entries {
		if strings.HasSuffix(e.Name(), ".png") {
			pngs++
			if !strings.Contains(doc, "("+e.Name()+")") {
				t.Errorf("report does not show %s", e.Name())
			}
		}
	}
	if n := strings.Count(doc, `<img src="data:image/png;base64,`); n != pngs || n == 0 {
		t.Errorf("%d inline pictures, %d PNG files", n, pngs)
	}
	// Swatches carry the colour of regimes.geojson.
	if !strings.Contains(doc, `style="background:#`) {
		t.Error("no colour swatches")
	}
}

// browserImage is what the browser shows of one picture of the report.
type browserImage struct {
	File   string `json:"file"`   // the PNG file named in its caption
	Src    string `json:"src"`    // its src attribute
	Width  int    `json:"width"`  // naturalWidth once decoded; 0 when it does not decode
	Height int    `json:"height"` // naturalHeight
	Error  string `json:"error"`  // why HTMLImageElement.decode() failed, or ""
}

// pictureScript waits for every picture of the page to decode and reports
// each (HTML Living Standard: HTMLImageElement.decode rejects an image
// that cannot be decoded, and naturalWidth is then 0).
const pictureScript = `Promise.all(Array.from(document.images).map(img =>
  img.decode().then(() => "", e => String(e)).then(error => ({
    file: ((img.closest("figure") || img).querySelector(".file") || {textContent: ""}).textContent.replace(/[()]/g, ""),
    src: img.getAttribute("src"),
    width: img.naturalWidth, height: img.naturalHeight, error}))))`

// chromiumContext starts Debian's chromium, headless, with a fresh
// profile, driven through the DevTools protocol, for at most limit.
func chromiumContext(t *testing.T, limit time.Duration) context.Context {
	t.Helper()
	chromium := tool(t, "chromium")
	alloc, cancelAlloc := chromedp.NewExecAllocator(context.Background(),
		chromedp.ExecPath(chromium), chromedp.Headless, chromedp.NoSandbox, chromedp.DisableGPU, chromedp.NoFirstRun,
		chromedp.Flag("disable-quic", true), chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-component-update", true), chromedp.Flag("disable-sync", true),
		chromedp.UserDataDir(t.TempDir()))
	ctx, cancelCtx := chromedp.NewContext(alloc)
	ctx, cancelTimeout := context.WithTimeout(ctx, limit)
	t.Cleanup(func() { cancelTimeout(); cancelCtx(); cancelAlloc() })
	return ctx
}

// showReport opens a report in the browser and returns its pictures as
// the browser decoded them, and a screenshot of the first 1280 × 2000
// pixels.
func showReport(ctx context.Context, path string) ([]browserImage, []byte, error) {
	abs, err := filepath.Abs(path)
	if err != nil {
		return nil, nil, err
	}
	if err := chromedp.Do(ctx, chromedp.EmulateViewport(1280, 2000), chromedp.Navigate("file://"+abs)); err != nil {
		return nil, nil, err
	}
	imgs, err := chromedp.Run(ctx, chromedp.Evaluate[[]browserImage](pictureScript, chromedp.EvalAwaitPromise))
	if err != nil {
		return nil, nil, err
	}
	shot, err := chromedp.Run(ctx, chromedp.CaptureScreenshot())
	return imgs, shot, err
}

// pictureProblems compares the pictures the browser shows with the PNG
// files of dir: every PNG file is shown once, its data URI holds exactly
// the file's bytes, and the browser decodes it to the width and height
// that Go's PNG decoder reads from the file (PNG, RFC 2083, IHDR).
func pictureProblems(t *testing.T, dir string, imgs []browserImage) []string {
	t.Helper()
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	files := map[string][]byte{}
	for _, e := range entries {
		if strings.HasSuffix(e.Name(), ".png") {
			files[e.Name()] = read(t, dir, e.Name())
		}
	}
	var problems []string
	if len(imgs) != len(files) || len(files) == 0 {
		problems = append(problems, fmt.Sprintf("%d pictures in the page, %d PNG files", len(imgs), len(files)))
	}
	for _, img := range imgs {
		want, ok := files[img.File]
		if !ok {
			problems = append(problems, fmt.Sprintf("picture %q names no PNG file of the folder", img.File))
			continue
		}
		delete(files, img.File) // each once
		b64, found := strings.CutPrefix(img.Src, "data:image/png;base64,")
		got, err := base64.StdEncoding.DecodeString(b64)
		if !found || err != nil || !bytes.Equal(got, want) {
			problems = append(problems, fmt.Sprintf("%s: the inline picture is not the file's bytes (%v)", img.File, err))
		}
		cfg, err := png.DecodeConfig(bytes.NewReader(want))
		if err != nil {
			t.Fatalf("%s: %v", img.File, err)
		}
		if img.Error != "" || img.Width != cfg.Width || img.Height != cfg.Height {
			problems = append(problems, fmt.Sprintf("%s: the browser shows %d × %d (%s), the file is %d × %d", img.File, img.Width, img.Height, img.Error, cfg.Width, cfg.Height))
		}
	}
	return problems
}

// The report renders in a real browser (Debian chromium, headless, driven
// through the DevTools protocol): every picture decodes at the size of its
// PNG file, and the page is neither empty nor blank. The same check on a
// copy whose pictures are broken fails for every picture, so that its
// passing means something.
func TestReportInChromium(t *testing.T) {
	ctx := chromiumContext(t, 90*time.Second)
	dir := written(t)
	imgs, shot, err := showReport(ctx, filepath.Join(dir, ReportFile))
	if err != nil {
		t.Fatalf("chromium: %v", err)
	}
	for _, p := range pictureProblems(t, dir, imgs) {
		t.Error(p)
	}
	for _, img := range imgs {
		t.Logf("%s: %d × %d in the browser", img.File, img.Width, img.Height)
	}
	img, err := png.Decode(bytes.NewReader(shot))
	if err != nil {
		t.Fatal(err)
	}
	if b := img.Bounds(); b.Dx() != 1280 || b.Dy() != 2000 {
		t.Errorf("screenshot is %v, want 1280 × 2000", b)
	}
	if share := inked(img); share < 0.02 {
		t.Errorf("screenshot is nearly blank: %.3f of pixels differ from the background", share)
	}

	// Every picture replaced by bytes that are no PNG.
	broken := regexp.MustCompile(`data:image/png;base64,[A-Za-z0-9+/=]+`).ReplaceAllString(string(read(t, dir, ReportFile)),
		"data:image/png;base64,"+base64.StdEncoding.EncodeToString([]byte("\x89PNG not a picture")))
	brokenPath := filepath.Join(t.TempDir(), ReportFile)
	if err := os.WriteFile(brokenPath, []byte(broken), 0o644); err != nil {
		t.Fatal(err)
	}
	imgs, _, err = showReport(ctx, brokenPath)
	if err != nil {
		t.Fatalf("chromium: %v", err)
	}
	undecoded := 0
	for _, p := range pictureProblems(t, dir, imgs) {
		if strings.Contains(p, "the browser shows 0 × 0") {
			undecoded++
		}
	}
	if undecoded != len(imgs) || undecoded == 0 {
		t.Errorf("with every picture broken, %d of %d pictures are found undecodable", undecoded, len(imgs))
	}
}

// inked is the share of pixels that differ clearly from the page's
// background, taken at the bottom right corner (outside the content).
func inked(img image.Image) float64 {
	b := img.Bounds()
	r0, g0, b0, _ := img.At(b.Max.X-1, b.Max.Y-1).RGBA()
	var n int
	for y := b.Min.Y; y < b.Max.Y; y += 2 {
		for x := b.Min.X; x < b.Max.X; x += 2 {
			r, g, bb, _ := img.At(x, y).RGBA()
			if diff(r, r0)+diff(g, g0)+diff(bb, b0) > 3*0x1000 {
				n++
			}
		}
	}
	return float64(n) / float64((b.Dx()/2)*(b.Dy()/2))
}

func diff(a, b uint32) uint32 {
	if a > b {
		return a - b
	}
	return b - a
}

// After an update the report lists how regime numbers were kept.
func TestReportListsRegimeChanges(t *testing.T) {
	r := fixtureRun()
	r.Changes = []model.RegimeChange{
		{Kind: model.ChangeRenumbered, From: []int{3}, To: []int{1}},
		{Kind: model.ChangeSplit, From: []int{2}, To: []int{2, 4}},
		{Kind: model.ChangeNew, To: []int{4}},
	}
	dir := t.TempDir()
	if err := Write(dir, r); err != nil {
		t.Fatal(err)
	}
	doc := string(read(t, dir, ReportFile))
	for _, want := range []string{
		"Regime numbers after the update",
		"The regime found as number 3 matches earlier regime 1 and takes its number.",
		"Earlier regime 2 split into regimes 2 and 4.",
		"Regime 4 is new: it matches no earlier regime.",
	} {
		if !strings.Contains(doc, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	if doc := string(read(t, written(t), ReportFile)); strings.Contains(doc, "Regime numbers after the update") {
		t.Error("a run without an update lists regime changes")
	}
}

// When the number of regimes was chosen, the report shows the index of
// every number tried, so that a user can see how close the others came.
func TestReportShowsRegimeScores(t *testing.T) {
	r := fixtureRun()
	r.Model.Scores = []model.Score{{K: 2, DaviesBouldin: 1.154}, {K: 3, DaviesBouldin: 0.7203}}
	dir := t.TempDir()
	if err := Write(dir, r); err != nil {
		t.Fatal(err)
	}
	doc := html.UnescapeString(string(read(t, dir, ReportFile)))
	if !strings.Contains(doc, "Davies–Bouldin index") || !strings.Contains(doc, "2: 1.15 · 3: 0.72") {
		t.Error("report lacks the Davies–Bouldin index of each number of regimes tried")
	}
}

// A model that records how its number of regimes was reached shows it: K,
// the runner-up and its p-value against the threshold.
func TestReportShowsRegimeChoice(t *testing.T) {
	r := fixtureRun()
	r.Model.Choice = &mapper.Choice{K: 3, Alpha: 1e-4, RunnerUp: 4, RunnerUpP: 3e-4, Marginal: true}
	dir := t.TempDir()
	if err := Write(dir, r); err != nil {
		t.Fatal(err)
	}
	doc := html.UnescapeString(string(read(t, dir, ReportFile)))
	if !strings.Contains(doc, "3 regimes found; runner-up 4") || !strings.Contains(doc, "p = 0.0003") || !strings.Contains(doc, "marginal") {
		t.Errorf("report lacks the choice of the number of regimes: %q", r.Model.Choice.String())
	}
}

// After folding, the model's choice counts the regimes held while its
// runner-up is one split from the number found: the report shows the
// run's note, which says both, in place of the model's own words.
func TestReportShowsRegimeNote(t *testing.T) {
	r := fixtureRun()
	r.Model.Choice = &mapper.Choice{K: 3, Alpha: 1e-4, RunnerUp: 5, RunnerUpP: 1e-20}
	r.RegimeNote = "3 regimes held by the sites and 1 phase (the area found as regime 4 is a phase of regime 2); the grouping: 4 regimes found; runner-up 5"
	dir := t.TempDir()
	if err := Write(dir, r); err != nil {
		t.Fatal(err)
	}
	doc := html.UnescapeString(string(read(t, dir, ReportFile)))
	if !strings.Contains(doc, r.RegimeNote) || strings.Contains(doc, r.Model.Choice.String()) {
		t.Errorf("report shows the model's %q, or lacks the run's note %q", r.Model.Choice.String(), r.RegimeNote)
	}
}

// A warning reaches the report once, in the order first given, although
// the caller passes on the model's and Write's own warnings in r.Warnings,
// which the report also gathers itself.
func TestReportWarningsOnce(t *testing.T) {
	r := fixtureRun()
	r.Model.Quality.Warnings = []string{"few training windows per unit"}
	own, err := Warnings(r)
	if err != nil {
		t.Fatal(err)
	}
	if len(own) == 0 {
		t.Fatal("the fixture has no export warning to repeat")
	}
	want := slices.Concat(r.Warnings, r.Model.Quality.Warnings, own)
	r.Warnings = slices.Concat(r.Warnings, r.Model.Quality.Warnings, own)
	dir := t.TempDir()
	if err := Write(dir, r); err != nil {
		t.Fatal(err)
	}
	doc := string(read(t, dir, ReportFile))
	block := regexp.MustCompile(`(?s)<div class="warnings">.*?</ul>`).FindString(doc)
	var got []string
	for _, m := range regexp.MustCompile(`<li>(.*?)</li>`).FindAllStringSubmatch(block, -1) {
		got = append(got, html.UnescapeString(m[1]))
	}
	if !slices.Equal(got, want) {
		t.Errorf("warnings in the report:\n%q\nwant\n%q", got, want)
	}
}

// The report's list of files is the folder's, each file once, the report
// itself included.
func TestReportListsFiles(t *testing.T) {
	dir := written(t)
	doc := string(read(t, dir, ReportFile))
	section := regexp.MustCompile(`(?s)<section id="files">.*?</section>`).FindString(doc)
	var listed []string
	for _, m := range regexp.MustCompile(`<code>(.*?)</code>`).FindAllStringSubmatch(section, -1) {
		listed = append(listed, m[1])
	}
	slices.Sort(listed)
	if folder := slices.Sorted(maps.Keys(snapshot(t, dir))); !slices.Equal(listed, folder) {
		t.Errorf("report lists %v, folder holds %v", listed, folder)
	}
}
