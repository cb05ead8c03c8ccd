package house

import (
	"bufio"
	"bytes"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"unicode/utf8"
)

const (
	maxGuideBytes = 12 * 1024 // README.md and DEVELOPERS.md: a guide, not a manual
	maxLineRunes  = 200       // in every Markdown file
)

// markdownFiles returns the module's .md files (paths relative to root),
// outside dot folders.
func markdownFiles(t *testing.T, root string) []string {
	t.Helper()
	var out []string
	err := filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() && path != root && strings.HasPrefix(d.Name(), ".") {
			return filepath.SkipDir
		}
		if !d.IsDir() && strings.HasSuffix(d.Name(), ".md") {
			rel, err := filepath.Rel(root, path)
			if err != nil {
				return err
			}
			out = append(out, filepath.ToSlash(rel))
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

func TestDocSizesAndLines(t *testing.T) {
	root := moduleRoot(t)
	for _, name := range []string{"README.md", "DEVELOPERS.md"} {
		info, err := os.Stat(filepath.Join(root, name))
		if err != nil {
			t.Fatal(err)
		}
		if info.Size() > maxGuideBytes {
			t.Errorf("%s is %d bytes, over %d: move details to docs/ (output.md, formats.md, methods.md, ...)",
				name, info.Size(), maxGuideBytes)
		}
	}
	files := markdownFiles(t, root)
	if len(files) < 5 {
		t.Fatalf("found only %d Markdown files under %s", len(files), root)
	}
	for _, name := range files {
		data, err := os.ReadFile(filepath.Join(root, name))
		if err != nil {
			t.Fatal(err)
		}
		sc := bufio.NewScanner(bytes.NewReader(data))
		sc.Buffer(make([]byte, 0, 64*1024), len(data)+1)
		for n := 1; sc.Scan(); n++ {
			if runes := utf8.RuneCount(sc.Bytes()); runes > maxLineRunes {
				t.Errorf("%s:%d has %d characters, over %d: wrap it (tables: shorten the cells or make a list)",
					name, n, runes, maxLineRunes)
			}
		}
		if err := sc.Err(); err != nil {
			t.Errorf("%s: %v", name, err)
		}
	}
}

// linkRE finds Markdown links to files of the repository (not web
// addresses or anchors within the page).
var linkRE = regexp.MustCompile(`\]\(([^)#:\s]+)(#[^)\s]*)?\)`)

// TestDocLinks checks that the guides' and docs' relative links name files
// that exist, so that a moved section leaves no dead pointer.
func TestDocLinks(t *testing.T) {
	root := moduleRoot(t)
	for _, name := range markdownFiles(t, root) {
		data, err := os.ReadFile(filepath.Join(root, name))
		if err != nil {
			t.Fatal(err)
		}
		for _, m := range linkRE.FindAllStringSubmatch(string(data), -1) {
			target := filepath.Join(root, filepath.Dir(name), filepath.FromSlash(m[1]))
			if _, err := os.Stat(target); err != nil {
				t.Errorf("%s links to %s, which does not exist", name, m[1])
			}
		}
	}
}

// TestReadmeEssentials checks what the README must keep while it shrinks:
// the two commands for a fresh machine, the cautions, and one line under
// Changes for each change told in full in docs/changes.md.
func TestReadmeEssentials(t *testing.T) {
	root := moduleRoot(t)
	readme, err := os.ReadFile(filepath.Join(root, "README.md"))
	if err != nil {
		t.Fatal(err)
	}
	text := string(readme)
	words := strings.Join(strings.Fields(text), " ") // wrapping does not matter
	for _, want := range []string{
		"go run ./cmd/unshelved demo",
		"go test ./...",
		"not peer reviewed",
		"not proof of publication bias",
		"GRADE assessment and local practice",
		"## Changes",
	} {
		if !strings.Contains(words, want) {
			t.Errorf("README.md lacks %q", want)
		}
	}
	full, err := os.ReadFile(filepath.Join(root, "docs", "changes.md"))
	if err != nil {
		t.Fatal(err)
	}
	_, changes, _ := strings.Cut(text, "\n## Changes\n")
	if got, want := countItems(changes), countItems(string(full)); got != want {
		t.Errorf("README.md lists %d changes, docs/changes.md %d: each change needs its short line and its full text", got, want)
	}
}

// countItems counts the top-level list items of a Markdown text.
func countItems(text string) int {
	n := 0
	for _, line := range strings.Split(text, "\n") {
		if strings.HasPrefix(line, "- ") {
			n++
		}
	}
	return n
}
