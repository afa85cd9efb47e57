package main

import (
	"bufio"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"unicode"
)

// headingSlug is the anchor a Markdown renderer gives a heading: lower
// case, letters, digits, '_' and '-' kept, spaces turned into '-', every
// other character dropped (common practice of GitHub-flavoured Markdown).
func headingSlug(h string) string {
	var b strings.Builder
	for _, r := range strings.ToLower(h) {
		switch {
		case unicode.IsLetter(r), unicode.IsNumber(r), r == '_', r == '-':
			b.WriteRune(r)
		case r == ' ':
			b.WriteByte('-')
		}
	}
	return b.String()
}

// docAnchors returns the anchors of the headings of a Markdown file (code
// blocks skipped; a repeated slug gets -1, -2, … as renderers number them).
func docAnchors(t *testing.T, path string) map[string]bool {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	anchors := map[string]bool{}
	seen := map[string]int{}
	inCode := false
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	for sc.Scan() {
		line := sc.Text()
		if strings.HasPrefix(line, "```") {
			inCode = !inCode
			continue
		}
		if inCode || !strings.HasPrefix(line, "#") {
			continue
		}
		text := strings.TrimSpace(strings.TrimLeft(line, "#"))
		s := headingSlug(text)
		if n := seen[s]; n > 0 {
			anchors[s+"-"+strconv.Itoa(n)] = true
		} else {
			anchors[s] = true
		}
		seen[s]++
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return anchors
}

// TestDocLinksResolve: every link to a heading in the repository's
// Markdown files ([text](#anchor) or [text](FILE.md#anchor)) names a heading
// that exists, so sections can be added and renamed without leaving dead
// links behind.
func TestDocLinksResolve(t *testing.T) {
	root := filepath.Join("..", "..")
	docs, err := filepath.Glob(filepath.Join(root, "*.md"))
	if err != nil || len(docs) == 0 {
		t.Fatalf("no Markdown files in %s (%v)", root, err)
	}
	link := regexp.MustCompile(`\]\(([A-Za-z0-9_./-]*\.md)?#([^)\s]+)\)`)
	anchors := map[string]map[string]bool{}
	anchorsOf := func(path string) map[string]bool {
		if anchors[path] == nil {
			anchors[path] = docAnchors(t, path)
		}
		return anchors[path]
	}
	links := 0
	for _, doc := range docs {
		b, err := os.ReadFile(doc)
		if err != nil {
			t.Fatal(err)
		}
		for _, m := range link.FindAllStringSubmatch(string(b), -1) {
			target := doc
			if m[1] != "" {
				target = filepath.Join(filepath.Dir(doc), m[1])
			}
			links++
			if !anchorsOf(target)[m[2]] {
				t.Errorf("%s: link %s#%s: no such heading in %s", filepath.Base(doc), m[1], m[2], filepath.Base(target))
			}
		}
	}
	if links == 0 {
		t.Fatal("no links to headings found: the pattern no longer matches the documents")
	}
}
