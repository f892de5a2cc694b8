package main

import (
	"context"
	"flag"
	"fmt"

	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/store"
)

func init() {
	register(command{
		name:    "verify",
		summary: "re-hash the stored samples' curve files; report any changed or missing",
		run:     runVerify,
	})
}

const verifyUsage = `usage: undercool verify [--db PATH|postgres://…] [--quiet]

Re-hashes (SHA-256) the curve file of every stored sample and compares it
with the hash taken when the sample was stored. Lists every file that has
changed, gone missing or cannot be read, and exits with status 1 if there
is any; 0 when all are as stored.
`

func runVerify(ctx context.Context, env *environ, args []string) error {
	fs := flag.NewFlagSet("verify", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	fs.Usage = func() { fmt.Fprint(env.stderr, verifyUsage); fs.PrintDefaults() }
	dbPath := fs.String("db", "", dbFlagHelp)
	quiet := fs.Bool("quiet", false, "print only the problems, not the summary")
	if help, err := parseNoArgs(fs, env, args); help || err != nil {
		return err
	}
	db, err := readRecords(ctx, env, *dbPath)
	if err != nil {
		return err
	}
	defer db.Close()
	checks, err := db.Verify(ctx)
	if err != nil {
		return err
	}
	counts := map[store.CurveState]int{}
	for _, c := range checks {
		counts[c.State]++
		switch c.State {
		case store.CurveChanged:
			fmt.Fprintf(env.stdout, "CHANGED     sample %d %q: %s\n            stored sha256 %s\n            now    sha256 %s\n",
				c.SampleID, c.Sample, escape.Line(c.Path), c.Want, c.Got)
		case store.CurveMissing:
			fmt.Fprintf(env.stdout, "MISSING     sample %d %q: %s\n", c.SampleID, c.Sample, escape.Line(c.Path))
		case store.CurveUnreadable:
			fmt.Fprintf(env.stdout, "UNREADABLE  sample %d %q: %s\n", c.SampleID, c.Sample, escape.Line(fmt.Sprint(c.Err)))
		}
	}
	bad := counts[store.CurveChanged] + counts[store.CurveMissing] + counts[store.CurveUnreadable]
	if !*quiet {
		fmt.Fprintf(env.stdout, "%s: %d curve files checked: %d as stored, %d changed, %d missing, %d unreadable",
			db.Path(), len(checks)-counts[store.CurveNone], counts[store.CurveOK], counts[store.CurveChanged],
			counts[store.CurveMissing], counts[store.CurveUnreadable])
		if n := counts[store.CurveNone]; n > 0 {
			fmt.Fprintf(env.stdout, " (%d samples have no curve file)", n)
		}
		fmt.Fprintln(env.stdout)
	}
	if bad > 0 {
		return exitError{code: 1}
	}
	return nil
}
