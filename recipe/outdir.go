package recipe

import (
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"

	"github.com/hashicorp/hcl/v2"

	"concordat/engine/ledger"
)

// Where a run may write. A recipe's tables and figures are written inside
// its own folder: a path that leaves it — "../../etc/x", an absolute path,
// or a path through a symbolic link that points outside — is refused,
// pointing at the path in the recipe, unless the run says where to write
// instead (`--out DIR`). Then every output is written under DIR at the path
// the recipe gives, with a leading "/" and any leading "../" taken off
// ("out/t.md" → DIR/out/t.md, "../../etc/x" → DIR/etc/x,
// "/srv/t.csv" → DIR/srv/t.csv), and the ledger goes into DIR too
// (DIR/<recipe>.ledger.jsonl), so that a read-only recipe folder can be
// run and a run's tables and record stay together.
//
// The ledger names each output relative to the folder the outputs are
// written under (the recipe's folder, or DIR) and the recipe and its data
// relative to the recipe's folder; so a recipe whose paths stay inside its
// folder records the same paths, and the same run hash, with or without
// --out.

// OutputDir is the folder that outputs are written under and that the
// ledger names them relative to: OutDir when ConfineOutputs set it, else
// the recipe's folder.
func (p *Plan) OutputDir() string {
	if p.OutDir != "" {
		return p.OutDir
	}
	return p.Dir
}

// output is one table or figure path of a plan, for ConfineOutputs.
type output struct {
	what      string  // `table "t"`, `figure "f"`
	asWritten string  // the path as the recipe writes it
	path      *string // the resolved path, rewritten under an out folder
	rng       hcl.Range
	decl      hcl.Range
}

func (p *Plan) outputs() []output {
	var out []output
	for _, t := range p.Tables {
		out = append(out, output{"table " + quote(t.Name), t.PathAsWritten, &t.Path, t.pathRange, t.DeclRange})
	}
	for _, f := range p.Figures {
		out = append(out, output{"figure " + quote(f.Name), f.PathAsWritten, &f.Path, f.pathRange, f.DeclRange})
	}
	return out
}

// ConfineOutputs checks where the plan's tables and figures would be
// written before a run writes them. With outDir "" every output must stay
// inside the recipe's folder: an absolute path, a path that climbs out with
// "..", or one that passes through a symbolic link pointing outside the
// folder (or nowhere) is an error at the path in the recipe. With an
// outDir, the outputs and the ledger are moved under it (see the comment
// at the top of this file; OutDir and LedgerPath say so afterwards) and
// the same symbolic-link check applies there, as do the checks that no two
// outputs share a file and that none replaces an input, the recipe or the
// ledger.
func (p *Plan) ConfineOutputs(outDir string) hcl.Diagnostics {
	var diags hcl.Diagnostics
	fail := func(o output, summary, detail string) {
		ctx := hcl.RangeOver(o.decl, o.rng)
		diags = append(diags, &hcl.Diagnostic{Severity: hcl.DiagError, Summary: summary, Detail: detail, Subject: o.rng.Ptr(), Context: &ctx})
	}
	outs := p.outputs()
	if outDir == "" {
		for _, o := range outs {
			if *o.path == "" {
				continue
			}
			clean := filepath.Clean(filepath.FromSlash(o.asWritten))
			switch {
			case filepath.IsAbs(clean):
				fail(o, "Output path is absolute",
					fmt.Sprintf("The %s writes %s, an absolute path. Outputs are written inside the recipe's folder (%s), so that a recipe cannot write anywhere else on the machine: give a path relative to it, or run with --out DIR to write every output under DIR (this one as %s).",
						o.what, quote(o.asWritten), quote(p.Dir), quote(filepath.ToSlash(filepath.Join("DIR", insideOut(o.asWritten))))))
			case climbs(clean):
				fail(o, "Output path leaves the recipe's folder",
					fmt.Sprintf("The %s writes %s, which is outside the recipe's folder (%s). Outputs are written inside it: give a path below it, or run with --out DIR to write every output under DIR (this one as %s).",
						o.what, quote(o.asWritten), quote(p.Dir), quote(filepath.ToSlash(filepath.Join("DIR", insideOut(o.asWritten))))))
			default:
				if link, target, bad := linkOutside(p.Dir, *o.path); bad {
					fail(o, "Output path leaves the recipe's folder through a link",
						fmt.Sprintf("The %s writes %s, but %s is a symbolic link to %s, which is outside the recipe's folder (%s). Write somewhere else, or run with --out DIR.",
							o.what, quote(o.asWritten), quote(link), quote(target), quote(p.Dir)))
				}
			}
		}
		return diags
	}

	root := filepath.Clean(outDir)
	taken := map[string]string{}
	abs := func(path string) string {
		if a, err := filepath.Abs(path); err == nil {
			return a
		}
		return filepath.Clean(path)
	}
	for _, ds := range p.Datasets {
		taken[abs(ds.Path)] = "the data file of dataset " + quote(ds.Name)
	}
	ledgerPath := filepath.Join(root, filepath.Base(ledger.PathFor(p.Path)))
	taken[abs(p.Path)] = "this recipe file"
	taken[abs(ledgerPath)] = "this recipe's ledger in " + quote(outDir)
	taken[abs(ledgerPath+".lock")] = "the ledger's lock file"
	taken[abs(ledgerPath+".pending")] = "the ledger's journal"
	for _, o := range outs {
		if *o.path == "" {
			continue
		}
		rel := insideOut(o.asWritten)
		if rel == "." {
			fail(o, "Output path names no file",
				fmt.Sprintf("The %s writes %s, which under --out %s is the folder itself.", o.what, quote(o.asWritten), quote(outDir)))
			continue
		}
		path := filepath.Join(root, rel)
		if what, ok := taken[abs(path)]; ok {
			fail(o, "Two outputs write the same file",
				fmt.Sprintf("Under --out %s, the %s writes %s, which is %s.", quote(outDir), o.what, quote(path), what))
			continue
		}
		taken[abs(path)] = "the file of the " + o.what
		if link, target, bad := linkOutside(root, path); bad {
			fail(o, "Output path leaves the output folder through a link",
				fmt.Sprintf("Under --out %s, the %s writes %s, but %s is a symbolic link to %s, which is outside that folder.",
					quote(outDir), o.what, quote(path), quote(link), quote(target)))
			continue
		}
		*o.path = path
	}
	if !diags.HasErrors() {
		p.OutDir = root
	}
	return diags
}

// climbs reports whether a cleaned relative path starts by leaving its
// folder.
func climbs(clean string) bool {
	return clean == ".." || strings.HasPrefix(clean, ".."+string(filepath.Separator))
}

// insideOut is where an output path as written goes under an out folder:
// cleaned, without a leading separator and without leading "..".
func insideOut(asWritten string) string {
	clean := filepath.Clean(filepath.FromSlash(asWritten))
	clean = strings.TrimLeft(clean[len(filepath.VolumeName(clean)):], string(filepath.Separator))
	for climbs(clean) {
		clean = strings.TrimPrefix(strings.TrimPrefix(clean, ".."), string(filepath.Separator))
	}
	if clean == "" {
		return "."
	}
	return clean
}

// linkOutside walks path (lexically inside root) from root down and reports
// the first component that is a symbolic link leading outside root, or
// nowhere, with where it leads. Components that do not exist yet are made
// by the run as plain folders, so the walk stops at the first of them.
func linkOutside(root, path string) (link, target string, bad bool) {
	realRoot, err := filepath.EvalSymlinks(root)
	if err != nil {
		return "", "", false // the root does not exist yet: nothing under it does
	}
	rel, err := filepath.Rel(root, path)
	if err != nil || climbs(rel) {
		return "", "", false // not below root: the lexical checks report it
	}
	cur := root
	for _, part := range strings.Split(rel, string(filepath.Separator)) {
		cur = filepath.Join(cur, part)
		info, err := os.Lstat(cur)
		if err != nil {
			return "", "", false // not there yet (or unreadable: the write will say)
		}
		if info.Mode()&fs.ModeSymlink == 0 {
			continue
		}
		real, err := filepath.EvalSymlinks(cur)
		if err != nil {
			to, _ := os.Readlink(cur)
			return cur, to + " (which does not exist)", true
		}
		if r, err := filepath.Rel(realRoot, real); err != nil || climbs(r) {
			return cur, real, true
		}
	}
	return "", "", false
}
