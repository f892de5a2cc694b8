package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/limits"
)

// TestAnalyzeRefusesUnknownAlloy: a typo in --alloy (grey_iron) is refused
// with the alloys the limits know, exit 2, before any file is analysed; with
// --limits the file's own names are listed.
func TestAnalyzeRefusesUnknownAlloy(t *testing.T) {
	dir := t.TempDir()
	f := writeText(t, dir, "flat.csv", flatCup())
	code, out, errs := filesRun(t, "analyze", "--alloy", "grey_iron", f)
	if code != 2 || out != "" || !strings.Contains(errs, `unknown alloy "grey_iron"`) || !strings.Contains(errs, "grey-iron, mg-al9zn1, pure-ag") {
		t.Errorf("exit %d, stdout %q, stderr %q", code, out, errs)
	}
	lim := writeText(t, dir, "shop.toml", "version = \"t\"\n[alloy.a356]\nfamily = \"aluminum\"\n[alloy.a356.metric.liquidus_c]\nrequired = true\n")
	code, _, errs = filesRun(t, "analyze", "--limits", lim, "--alloy", "grey-iron", f)
	if code != 2 || !strings.Contains(errs, lim+" know a356") {
		t.Errorf("with --limits: exit %d, %q", code, errs)
	}
	// A file's own '# alloy:' line naming an unknown alloy is judged
	// unchecked with the known names in its reasons.
	good, _ := os.ReadFile(simulatedCup(t, dir, "grey.csv", "grey-iron", 4))
	g := writeText(t, dir, "typo.csv", strings.Replace(string(good), "# alloy: grey-iron", "# alloy: grey_iron", 1))
	_, out, _ = filesRun(t, "analyze", "--json", g)
	recs := jsonLines(t, out)
	if len(recs) != 1 || recs[0]["verdict"] != "unchecked" || !strings.Contains(strings.Join(strs(recs[0]["reasons"]), " "), "it has: al-si7mg") {
		t.Errorf("unknown '# alloy:' line: %v", recs)
	}
	// On a curve that cannot be trusted the unknown alloy is still said.
	flat := writeText(t, dir, "flat-typo.csv", strings.Replace(flatCup(), "grey-iron", "grey_iron", 1))
	_, out, _ = filesRun(t, "analyze", "--json", flat)
	if recs := jsonLines(t, out); len(recs) != 1 || !strings.Contains(strings.Join(strs(recs[0]["warnings"]), " "), `alloy "grey_iron" is not in built-in`) {
		t.Errorf("unknown alloy on an invalid curve: %v", recs[0]["warnings"])
	}
}

func strs(v any) []string {
	var out []string
	for _, x := range v.([]any) {
		out = append(out, x.(string))
	}
	return out
}

// TestAnalyzeNoAlloyRecognisesFamily: an Al-Si curve that names no alloy is
// analysed as aluminium (its highest reading is below 1000 °C and at least
// 560 °C, limits.FamilyOfCurve), so its arrests are found, and it is told
// the alloy is missing, not to re-sample.
func TestAnalyzeNoAlloyRecognisesFamily(t *testing.T) {
	f := filepath.Join("..", "..", "testdata", "files", "al-si7mg-tab-no-metadata.txt")
	code, out, errs := filesRun(t, "analyze", "--json", f)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	recs := jsonLines(t, out)
	if len(recs) != 1 {
		t.Fatalf("%d records", len(recs))
	}
	r := recs[0]
	if r["family"] != "aluminum" || r["verdict"] != "unchecked" || r["eutectic_min_c"] == nil || len(r["problems"].([]any)) != 0 {
		t.Errorf("family %v, verdict %v, eutectic %v, problems %v", r["family"], r["verdict"], r["eutectic_min_c"], r["problems"])
	}
	if w := strings.Join(strs(r["warnings"]), " "); !strings.Contains(w, "no alloy named") || !strings.Contains(w, "analysed as aluminum, recognised from its highest reading") {
		t.Errorf("warnings %q", w)
	}
}

// TestAnalyzeCustomAlloyResolvesAsAssess: an alloy named outside the naming
// rule (a356, family aluminum, with its own detection windows) resolves the
// same in analyze as in assess.Options and limits.Book.Resolve: the same
// family and detector options, and the same record.
func TestAnalyzeCustomAlloyResolvesAsAssess(t *testing.T) {
	dir := t.TempDir()
	text := strings.Replace(string(limits.Example()), "[alloy.al-si7mg]", "[alloy.a356]", 1)
	text = strings.ReplaceAll(text, "[alloy.al-si7mg.", "[alloy.a356.")
	text = strings.ReplaceAll(text, `alloys = ["al-si7mg"]`, `alloys = ["a356"]`) // the inoculant tables name it too
	text += "\n[alloy.a356.detect]\nliquidus_c = [590.0, 630.0]\neutectic_c = [555.0, 578.0]\n"
	lim := writeText(t, dir, "shop.toml", text)
	book, err := limits.Load(lim)
	if err != nil {
		t.Fatal(err)
	}
	cup := simulatedCup(t, dir, "a356.csv", "al-si7mg", 3)
	c, err := curvefile.ReadFile(cup)
	if err != nil {
		t.Fatal(err)
	}
	in := assess.Input{File: cup, Alloy: "a356", Time: c.Time, Temp: c.Temp, Limits: book, Meta: c.Meta}
	res := book.Resolve("a356")
	if res.Family() != arrest.FamilyAluminum || res.Detect.Hints.Eutectic != (arrest.Range{LoC: 555, HiC: 578}) || res.Detect.Hints.EutecticTopC != 578 {
		t.Fatalf("Resolve(a356) = %+v", res.Detect)
	}
	if opt := assess.Options(in); !reflect.DeepEqual(opt, res.Detect) {
		t.Errorf("assess.Options %+v, Resolve %+v", opt, res.Detect)
	}
	code, out, errs := filesRun(t, "analyze", "--json", "--limits", lim, "--alloy", "a356", cup)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	want, _ := json.Marshal(assess.Assess(in))
	if got := strings.TrimSpace(out); got != string(want) {
		t.Errorf("analyze's record differs from assess.Assess's:\n%s\n%s", got, want)
	}
	var rec assess.Record
	json.Unmarshal([]byte(out), &rec)
	if rec.Family != "aluminum" || rec.Verdict == "unchecked" {
		t.Errorf("family %q verdict %q (%v)", rec.Family, rec.Verdict, rec.Reasons)
	}
	_ = os.Remove(cup)
}
