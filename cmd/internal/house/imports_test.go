package house

import (
	"bytes"
	"encoding/json"
	"errors"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

// The house's arrows (DEVELOPERS.md draws them). A package of ours may
// import only the layers listed for its own layer; an import of one of our
// packages that is not listed is a wrong arrow and fails the test.
//
//	cmd  ->  compare/workspace  ->  {compare/..., store, ingest}
//	compare/... (pure)          ->  analysis
//	store -> ingest -> analysis; analysis imports nothing of ours
//
// Only production imports are checked: a test may build a workspace with
// store and ingest to feed a pure package.
var mayImport = map[string][]string{
	layerAnalysis: {layerAnalysis},
	layerIngest:   {layerIngest, layerAnalysis},
	layerStore:    {layerStore, layerIngest, layerAnalysis},
	// The pure logic: review, studies, links, trials in; result structs out.
	layerCompare: {layerCompare, layerAnalysis},
	// Rendering draws result structs; it reads no workspace and no file.
	layerRender: {layerRender, layerCompare, layerAnalysis},
	// The only layer that touches both the store and the logic.
	layerWorkspace: {layerWorkspace, layerCompare, layerRender, layerStore, layerIngest, layerAnalysis, layerData},
	// Generators of test workspaces (compare/internal/...) build databases
	// as the workspace layer does, for tests and benchmarks only.
	layerFixtures: {layerFixtures, layerWorkspace, layerCompare, layerStore, layerIngest, layerAnalysis, layerData},
	// Commands: flags, validation, output formatting and exit codes. They
	// reach the database only through compare/workspace.
	layerCmd:   {layerWorkspace, layerCompare, layerRender, layerIngest, layerAnalysis, layerData},
	layerData:  {},
	layerHouse: {},
}

// compareUsesIngest lists the pure compare packages that may import ingest
// for its record types, each with the reason it cannot do without.
var compareUsesIngest = map[string]string{
	"unshelved/compare/funders": "reads ingest.TrialSummary (with its Org and Date), the registration view the workspace query returns",
}

// wrongArrows are today's imports against the rules above: to remove in #15
// (compare/workspace takes the store-touching code; render and compare stop
// reading ingest and store). An entry that no longer occurs fails the test,
// so the list only shrinks; never add to it.
var wrongArrows = map[string]bool{
	"unshelved/compare -> unshelved/ingest":        true,
	"unshelved/compare/render -> unshelved/ingest": true,
}

const (
	layerAnalysis  = "analysis"
	layerIngest    = "ingest"
	layerStore     = "store"
	layerCompare   = "compare/... (pure)"
	layerRender    = "compare/render"
	layerWorkspace = "compare/workspace"
	layerFixtures  = "compare/internal (test workspaces)"
	layerCmd       = "cmd"
	layerData      = "testdata (embedded files)"
	layerHouse     = "cmd/internal/house"
)

// layerOf places one of our packages (path relative to the module).
func layerOf(rel string) string {
	under := func(p string) bool { return rel == p || strings.HasPrefix(rel, p+"/") }
	switch {
	case under("analysis"):
		return layerAnalysis
	case under("ingest"):
		return layerIngest
	case under("store"):
		return layerStore
	case under("compare/workspace"):
		return layerWorkspace
	case under("compare/internal"):
		return layerFixtures
	case under("compare/render"):
		return layerRender
	case under("compare"):
		return layerCompare
	case under("cmd/internal/house"):
		return layerHouse
	case under("cmd"):
		return layerCmd
	case under("testdata"):
		return layerData
	}
	return ""
}

type listedPackage struct {
	ImportPath string
	Imports    []string
	Module     *struct{ Path string }
}

// ourPackages runs go list -deps on the module and returns our packages
// with their production imports of our packages.
func ourPackages(t *testing.T) (module string, pkgs map[string][]string) {
	t.Helper()
	root := moduleRoot(t)
	goBin, err := exec.LookPath("go")
	if err != nil {
		t.Fatalf("the import check needs the go command on PATH: %v", err)
	}
	cmd := exec.Command(goBin, "list", "-deps", "-json=ImportPath,Imports,Module", "./...")
	cmd.Dir = root
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("go list: %v\n%s", err, stderr.String())
	}
	module = modulePath(t, root)
	pkgs = map[string][]string{}
	dec := json.NewDecoder(bytes.NewReader(out))
	for {
		var p listedPackage
		if err := dec.Decode(&p); errors.Is(err, io.EOF) {
			break
		} else if err != nil {
			t.Fatalf("go list output: %v", err)
		}
		if p.Module == nil || p.Module.Path != module {
			continue
		}
		var ours []string
		for _, imp := range p.Imports {
			if imp == module || strings.HasPrefix(imp, module+"/") {
				ours = append(ours, imp)
			}
		}
		pkgs[p.ImportPath] = ours
	}
	if len(pkgs) < 5 {
		t.Fatalf("go list found only %d packages of module %s", len(pkgs), module)
	}
	return module, pkgs
}

func TestImportArrows(t *testing.T) {
	module, pkgs := ourPackages(t)
	rel := func(p string) string { return strings.TrimPrefix(strings.TrimPrefix(p, module), "/") }
	var names []string
	for p := range pkgs {
		names = append(names, p)
	}
	sort.Strings(names)
	seen := map[string]bool{}
	var graph strings.Builder
	for _, from := range names {
		fromLayer := layerOf(rel(from))
		if fromLayer == "" {
			t.Errorf("package %s has no place in the house: give its folder a layer in layerOf (and DEVELOPERS.md)", from)
			continue
		}
		imports := pkgs[from]
		sort.Strings(imports)
		graph.WriteString(rel(from) + " -> " + strings.Join(mapStrings(imports, rel), ", ") + "\n")
		for _, to := range imports {
			toLayer := layerOf(rel(to))
			arrow := from + " -> " + to
			ok := contains(mayImport[fromLayer], toLayer)
			if !ok && fromLayer == layerCompare && toLayer == layerIngest && compareUsesIngest[from] != "" {
				ok = true
			}
			switch {
			case ok:
			case wrongArrows[arrow]:
				seen[arrow] = true
			default:
				t.Errorf("wrong arrow %s: %s may import only %s (see DEVELOPERS.md for where the code belongs)",
					arrow, fromLayer, strings.Join(mayImport[fromLayer], ", "))
			}
		}
	}
	t.Logf("import graph of our packages (production code):\n%s", graph.String())
	for arrow := range wrongArrows {
		if !seen[arrow] {
			t.Errorf("wrongArrows lists %q, which no longer occurs: remove it from the list", arrow)
		}
	}
	for p, why := range compareUsesIngest {
		if why == "" || layerOf(rel(p)) != layerCompare {
			t.Errorf("compareUsesIngest[%q] needs a reason and must name a pure compare package", p)
		}
	}
}

// TestImportRulesCatchWrongArrows checks the rules themselves on arrows
// that must be refused and ones that must pass.
func TestImportRulesCatchWrongArrows(t *testing.T) {
	for _, c := range []struct {
		from, to string
		ok       bool
	}{
		{"analysis", "ingest", false},
		{"analysis/bias", "analysis", true},
		{"ingest", "store", false},
		{"ingest", "compare", false},
		{"store", "compare", false},
		{"store", "cmd/unshelved", false},
		{"store", "ingest", true},
		{"compare/match", "store", false},
		{"compare/audit", "analysis", true},
		{"compare/audit", "compare/workspace", false},
		{"compare/render", "store", false},
		{"compare/render", "ingest", false},
		{"compare/render", "compare/audit", true},
		{"compare/workspace", "store", true},
		{"compare/workspace", "cmd/unshelved", false},
		{"cmd/unshelved", "compare/workspace", true},
		{"cmd/unshelved", "store", false},
	} {
		got := contains(mayImport[layerOf(c.from)], layerOf(c.to))
		if got != c.ok {
			t.Errorf("%s -> %s allowed = %v, want %v", c.from, c.to, got, c.ok)
		}
	}
	if layerOf("newtop") != "" {
		t.Error("an unknown top-level folder must have no layer (the test then asks for one)")
	}
}

func moduleRoot(t *testing.T) string {
	t.Helper()
	dir, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			return dir
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			t.Fatal("no go.mod above the test's folder")
		}
		dir = parent
	}
}

func modulePath(t *testing.T, root string) string {
	t.Helper()
	data, err := os.ReadFile(filepath.Join(root, "go.mod"))
	if err != nil {
		t.Fatal(err)
	}
	for _, line := range strings.Split(string(data), "\n") {
		if rest, ok := strings.CutPrefix(strings.TrimSpace(line), "module "); ok {
			return strings.TrimSpace(rest)
		}
	}
	t.Fatal("go.mod names no module")
	return ""
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

func mapStrings(in []string, f func(string) string) []string {
	out := make([]string, len(in))
	for i, s := range in {
		out[i] = f(s)
	}
	return out
}
