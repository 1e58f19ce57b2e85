package main

import (
	"bytes"
	"context"
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/assay-project/assay/engine/report"
)

// The browser test renders the demo's HTML report in headless Chromium
// (Debian's chromium package; .ci/run installs it). Without chromium on
// PATH it is skipped, unless ASSAY_BROWSER_TEST=require, which .ci/run
// sets so that CI cannot skip it silently. Screenshots go to the folder
// ASSAY_ARTIFACTS names, or to a temporary folder.

const demoPolicy = "../../examples/apiary/policy.yaml"

// chromiumFlags keep a headless run to itself: no sandbox (CI runs as
// root), no GPU, no network of its own, a fresh profile (added per run).
var chromiumFlags = []string{
	"--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
	"--disable-background-networking", "--disable-component-update", "--disable-sync",
	"--enable-logging=stderr", "--v=0",
}

// chromium returns the path of the chromium command, or skips the test.
func chromium(t *testing.T) string {
	t.Helper()
	path, err := exec.LookPath("chromium")
	if err == nil {
		return path
	}
	if os.Getenv("ASSAY_BROWSER_TEST") == "require" {
		t.Fatal("chromium is not on PATH and ASSAY_BROWSER_TEST=require: install it (apt-get install -y chromium)")
	}
	t.Skip("chromium is not on PATH: the HTML report's browser test needs it (apt-get install -y chromium; .ci/run installs it)")
	return ""
}

// browse opens the file page in headless chromium with extra flags and
// returns its standard output and the console messages it logged.
func browse(t *testing.T, bin, page string, extra ...string) (stdout []byte, console []string) {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	args := append(append(append([]string{}, chromiumFlags...), "--user-data-dir="+t.TempDir()), extra...)
	abs, err := filepath.Abs(page)
	if err != nil {
		t.Fatal(err)
	}
	cmd := exec.CommandContext(ctx, bin, append(args, "file://"+abs)...)
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil {
		t.Fatalf("chromium %s: %v\n%s", strings.Join(extra, " "), err, errb.String())
	}
	// Console messages, whatever their level, are logged as
	// "[pid:tid:time:INFO:CONSOLE:line] "text", source: url (line)".
	for _, line := range strings.Split(errb.String(), "\n") {
		if strings.Contains(line, ":CONSOLE") {
			console = append(console, line)
		}
	}
	return out.Bytes(), console
}

// sectionStart finds the start of each rule's section in a DOM.
var sectionStart = regexp.MustCompile(`<section class="rule" id="([^"]+)"`)

// chartsInDOM counts the <svg> elements of each rule section of dom, by
// section id.
func chartsInDOM(dom string) map[string]int {
	counts := map[string]int{}
	locs := sectionStart.FindAllStringSubmatchIndex(dom, -1)
	for i, loc := range locs {
		end := len(dom)
		if i+1 < len(locs) {
			end = locs[i+1][0]
		}
		counts[dom[loc[2]:loc[3]]] = strings.Count(dom[loc[0]:end], "<svg ")
	}
	return counts
}

// chartsWanted counts the kinds of plot data each result of rep carries,
// by the id of its section ("rule-" and the rule id, which the demo's ids
// keep as they are).
func chartsWanted(rep *report.Report) map[string]int {
	want := map[string]int{}
	for _, res := range rep.Results {
		var has []bool
		if f := res.Fit; f != nil {
			has = append(has, f.Histogram != nil, f.QQ != nil, len(f.Cells) > 0)
		}
		if e := res.Extremes; e != nil {
			has = append(has, e.Histogram != nil, e.Box != nil)
		}
		if j := res.Joint; j != nil {
			has = append(has, j.QQ != nil)
		}
		if pr := res.Pair; pr != nil {
			has = append(has, pr.Points != nil)
		}
		if d := res.Drift; d != nil {
			has = append(has, d.Histogram != nil)
		}
		n := 0
		for _, h := range has {
			if h {
				n++
			}
		}
		want["rule-"+res.ID] = n
	}
	return want
}

// failingReports checks policy, whose data fail, writing the HTML report
// to page, and returns the JSON report of the same run.
func failingReports(t *testing.T, policy, page string) *report.Report {
	t.Helper()
	jsonPath := filepath.Join(t.TempDir(), "report.json")
	var out, errb bytes.Buffer
	code := run(context.Background(), []string{"check", policy, "--report", "html=" + page, "--report", "json=" + jsonPath},
		nil, &out, &errb)
	if code != exitFail {
		t.Fatalf("check %s exited %d, want %d (its data fail)\n%s", policy, code, exitFail, errb.String())
	}
	data, err := os.ReadFile(jsonPath)
	if err != nil {
		t.Fatal(err)
	}
	var rep report.Report
	if err := json.Unmarshal(data, &rep); err != nil {
		t.Fatal(err)
	}
	return &rep
}

// TestBrowser writes the demo's HTML report, opens it in headless
// chromium, checks that it loads without a console message (the page has
// no script, and its content security policy makes the browser log any
// attempt to load something) and that every chart the report's data call
// for is in the DOM, and keeps screenshots at desktop and phone widths
// (and of the whole page at desktop width when ASSAY_ARTIFACTS names a
// folder to keep them in).
func TestBrowser(t *testing.T) {
	bin := chromium(t)
	dir := os.Getenv("ASSAY_ARTIFACTS")
	keep := dir != ""
	if !keep {
		dir = t.TempDir()
	} else if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	page := filepath.Join(dir, "report.html")
	rep := failingReports(t, demoPolicy, page)

	dom, console := browse(t, bin, page, "--dump-dom")
	t.Run("console", func(t *testing.T) {
		if len(console) > 0 {
			t.Errorf("the report logged console messages:\n%s", strings.Join(console, "\n"))
		}
		// The detector itself: a page that tries to load an image against
		// its content security policy must be caught.
		planted := filepath.Join(t.TempDir(), "planted.html")
		err := os.WriteFile(planted, []byte(`<!DOCTYPE html><html><head><meta http-equiv="Content-Security-Policy" `+
			`content="default-src 'none'"><title>planted</title></head><body><img src="https://example.invalid/x.png">`+
			`</body></html>`), 0o644)
		if err != nil {
			t.Fatal(err)
		}
		if _, console := browse(t, bin, planted, "--dump-dom"); len(console) == 0 {
			t.Error("a page that tries to load an image logged no console message: the check above cannot fail")
		}
	})

	t.Run("charts", func(t *testing.T) {
		got, want := chartsInDOM(string(dom)), chartsWanted(rep)
		total := 0
		for id, n := range want {
			total += n
			if got[id] != n {
				t.Errorf("section %s has %d charts in the DOM, want %d", id, got[id], n)
			}
		}
		if len(got) != len(want) {
			t.Errorf("%d rule sections in the DOM, want %d", len(got), len(want))
		}
		if total == 0 {
			t.Error("the demo report has no chart to check")
		}
		t.Logf("%d charts in %d rule sections", total, len(want))
	})

	t.Run("screenshots", func(t *testing.T) {
		shots := []struct{ name, size string }{
			{"report.png", "1280,4000"},
			{"report-phone.png", "390,3000"},
		}
		if keep {
			// the whole demo page, charts included, for a person to look at
			shots = append(shots, struct{ name, size string }{"report-full.png", "1280,12000"})
		}
		for _, shot := range shots {
			png := filepath.Join(dir, shot.name)
			os.Remove(png)
			browse(t, bin, page, "--screenshot="+png, "--window-size="+shot.size)
			b, err := os.ReadFile(png)
			if err != nil {
				t.Fatalf("no screenshot: %v", err)
			}
			if !bytes.HasPrefix(b, []byte("\x89PNG\r\n\x1a\n")) {
				t.Fatalf("%s is not a PNG", png)
			}
			t.Logf("screenshot %s (%d bytes)", png, len(b))
		}
	})
}

// TestBrowserDrift renders the report of the drift conformance case,
// which the demo lacks, and checks that every numeric drift rule's
// section holds the chart of both histograms in the DOM, as many charts as
// the JSON report's plot data call for.
func TestBrowserDrift(t *testing.T) {
	bin := chromium(t)
	page := filepath.Join(t.TempDir(), "drift.html")
	rep := failingReports(t, "../../testdata/conformance/drift-planted/policy.yaml", page)
	dom, console := browse(t, bin, page, "--dump-dom")
	if len(console) > 0 {
		t.Errorf("the report logged console messages:\n%s", strings.Join(console, "\n"))
	}
	got, want := chartsInDOM(string(dom)), chartsWanted(rep)
	overlays := 0
	for _, res := range rep.Results {
		id := "rule-" + res.ID
		if got[id] != want[id] {
			t.Errorf("section %s has %d charts in the DOM, want %d", id, got[id], want[id])
		}
		if res.Drift != nil && res.Drift.Histogram != nil {
			overlays++
		}
	}
	if n := strings.Count(string(dom), ">Histograms of "); n != 2*overlays {
		t.Errorf("%d titles and captions of overlaid histograms in the DOM, want %d (two for each of %d numeric drift rules)", n, 2*overlays, overlays)
	}
	if overlays == 0 {
		t.Error("the drift case has no numeric drift rule with histograms")
	}
}
