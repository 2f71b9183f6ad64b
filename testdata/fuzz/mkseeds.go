//go:build ignore

// mkseeds writes the committed seed corpora of capbank's fuzz targets,
// from the demo inputs in testdata/ and the malformed ones in
// testdata/bad/, into each target's package (see README.md here). Run it
// from the module root after adding inputs there:
//
//	go run testdata/fuzz/mkseeds.go
//
// It rewrites only the files whose names start with "seed-"; inputs the
// fuzzer found (named by their hash) are left alone.
package main

import (
	"bytes"
	"fmt"
	"log"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"capbank/web/share"
	"capbank/web/store"
)

// maxSeed is the largest input kept as a seed: the seeds run in every
// go test, and the fuzzer mutates small inputs faster.
const maxSeed = 32 << 10

// value is one argument of a corpus entry.
type value struct {
	typ string // "[]byte" or "string"
	v   string
}

func (v value) String() string { return fmt.Sprintf("%s(%q)", v.typ, v.v) }

type target struct {
	pkg, name string
	entries   map[string][]value // file name → arguments
}

func newTarget(pkg, name string) *target {
	return &target{pkg: pkg, name: name, entries: map[string][]value{}}
}

func (t *target) add(file string, args ...value) { t.entries["seed-"+file] = args }

// addFiles adds every file matching pattern no larger than maxSeed, as one
// argument of type typ.
func (t *target) addFiles(prefix, pattern, typ string) {
	files, err := filepath.Glob(pattern)
	if err != nil {
		log.Fatal(err)
	}
	for _, f := range files {
		b, err := os.ReadFile(f)
		if err != nil {
			log.Fatal(err)
		}
		if len(b) > maxSeed {
			continue
		}
		t.add(prefix+strings.TrimSuffix(filepath.Base(f), filepath.Ext(f)), value{typ, string(b)})
	}
}

// write replaces the target's seed files.
func (t *target) write() {
	dir := filepath.Join(t.pkg, "testdata", "fuzz", t.name)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		log.Fatal(err)
	}
	old, _ := filepath.Glob(filepath.Join(dir, "seed-*"))
	for _, f := range old {
		os.Remove(f)
	}
	names := make([]string, 0, len(t.entries))
	for n := range t.entries {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		var b bytes.Buffer
		b.WriteString("go test fuzz v1\n")
		for _, v := range t.entries[n] {
			b.WriteString(v.String() + "\n")
		}
		if err := os.WriteFile(filepath.Join(dir, n), b.Bytes(), 0o644); err != nil {
			log.Fatal(err)
		}
	}
	fmt.Printf("%s/%s: %d seeds\n", t.pkg, t.name, len(names))
}

func main() {
	design := newTarget("sizing", "FuzzDesign")
	design.addFiles("demo-", "testdata/*.json", "[]byte")
	design.addFiles("bad-", "testdata/bad/designs/*.json", "[]byte")

	profile := newTarget("sizing", "FuzzParseProfileCSV")
	profile.addFiles("demo-", "testdata/profiles/*.csv", "string")
	profile.addFiles("bad-", "testdata/bad/profiles/*.csv", "string")

	measure := newTarget("sizing/measure", "FuzzParseCSV")
	measure.addFiles("demo-", "testdata/measure/*.csv", "string")
	measure.addFiles("bad-", "testdata/bad/measure/*.csv", "string")

	cells := newTarget("web/store", "FuzzImportCellsCSV")
	cells.addFiles("bad-", "testdata/bad/cells/*.csv", "[]byte")
	var lib bytes.Buffer
	if err := store.ExportCellsCSV(&lib, store.DemoCells()); err != nil {
		log.Fatal(err)
	}
	cells.add("demo-cells", value{"[]byte", lib.String()})

	decode := newTarget("web/share", "FuzzDecode")
	decode.addFiles("bad-", "testdata/bad/share/*.txt", "string")
	demos, _ := filepath.Glob("testdata/*.json")
	for _, f := range demos {
		b, err := os.ReadFile(f)
		if err != nil {
			log.Fatal(err)
		}
		tok, err := share.Encode(b)
		if err != nil {
			log.Fatal(err)
		}
		decode.add("demo-"+strings.TrimSuffix(filepath.Base(f), ".json"), value{"string", tok})
	}

	// Numbers as the form fields take them: SI prefixes, units, the
	// spellings a user might type, and the values that must be refused.
	typed := []string{"48", "2.7", "1.5k", "350", "0.92", "92%", "2.8 mΩ", "2.8mohm", "650 F", "10µ", "10u", "3.3n",
		"1e3", "1E-3", "-20", "−20", "+5", ".5", "5.", "1,5", "1 000", "1_000", "0x10", "NaN", "Inf", "-Inf",
		"1e308k", "1e-400", "1e999", "", " ", "k", "µ", "%", "--1", "1e", "１２", "\u00a048", "48\u200b", "4\x008"}
	si := newTarget("web", "FuzzParseSI")
	for i, s := range typed {
		si.add(fmt.Sprintf("typed-%02d", i), value{"string", s})
	}
	form := newTarget("web", "FuzzForm")
	for i, s := range typed {
		form.add(fmt.Sprintf("typed-%02d", i), value{"string", s}, value{"string", typed[(i*7+3)%len(typed)]})
	}

	for _, t := range []*target{design, profile, measure, cells, decode, si, form} {
		t.write()
	}
}
