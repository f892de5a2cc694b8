package main

import (
	"context"
	"flag"
	"fmt"
	"path/filepath"
	"sync"

	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/sample"
	"github.com/undercool-foundry/undercool/internal/session"
	"github.com/undercool-foundry/undercool/replay"
	"github.com/undercool-foundry/undercool/tui"
)

func init() {
	register(command{
		name:    "replay",
		summary: "run a curve file through the live dashboard at 1x to 50x, or straight to the end",
		run:     runReplay,
	})
}

func runReplay(ctx context.Context, env *environ, args []string) error {
	fs := flag.NewFlagSet("replay", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	speed := fs.Float64("speed", 10, "how many times faster than it was recorded (1 to 50)")
	end := fs.Bool("end", false, "go straight to the end of the file")
	limitsPath := fs.String("limits", "", "limits file (default: the built-in examples)")
	columns := columnFlags(fs)
	fs.Usage = func() {
		fmt.Fprintln(env.stderr, "usage: undercool replay FILE [--speed X | --end] [--limits FILE]\n        [--time-column C] [--temp-column C] [--time-unit U] [--temp-unit U]")
		fmt.Fprint(env.stderr, "\n"+columnsUsage+"\n\n")
		fs.PrintDefaults()
	}
	// Accept options before or after the file name.
	var files []string
	rest := args
	for {
		if help, err := parseFlags(fs, rest); help || err != nil {
			return err
		}
		if fs.NArg() == 0 {
			break
		}
		files = append(files, fs.Arg(0))
		rest = fs.Args()[1:]
	}
	if len(files) != 1 {
		fmt.Fprintln(env.stderr, "undercool replay: give exactly one curve file")
		return errUsage
	}
	if *speed < 1 || *speed > 50 {
		fmt.Fprintf(env.stderr, "undercool replay: --speed %g: use 1 to 50\n", *speed)
		return errUsage
	}
	if err := checkColumns(env, "replay", columns); err != nil {
		return err
	}
	path := files[0]
	curve, err := columns.ReadFile(path)
	if err != nil {
		return err
	}
	for _, n := range curve.Notes { // what reading the file took (swapped columns, padding)
		fmt.Fprintf(env.stderr, "undercool replay: note: %s\n", escape.Line(n))
	}
	if len(curve.Time) == 0 {
		return fmt.Errorf("%s: no readings to replay", path)
	}
	book, saver, err := loadLimits(*limitsPath)
	if err != nil {
		return err
	}
	abs, _ := filepath.Abs(path)
	src := replay.New(curve, abs, "", *speed)
	if *end {
		src.SkipToEnd()
	}
	// The same way as a live sample: the replay's items through the
	// tracker (its session) to the screen; the finished sample is kept for
	// this session only (a replay stores nothing).
	mem := &tui.Memory{}
	sess := session.New(src, sample.New(sample.Config{Limits: book}), session.Options{Finished: mem.Add})
	srcCtx, stopSrc := context.WithCancel(context.WithoutCancel(ctx))
	defer stopSrc()
	var wg sync.WaitGroup
	wg.Go(func() { src.Run(srcCtx) })
	wg.Go(sess.Run)
	opt := tui.Options{Feed: sess, Pace: src, Title: "replay · " + filepath.Base(path), Limits: book, SaveLimits: saver,
		Records: mem, ReadCurve: columns.ReadFile}
	if isTerminal(env) {
		err = tui.Run(ctx, opt, env.stdin, env.stdout)
	} else {
		err = tui.Lines(ctx, opt, env.stdout, 1)
	}
	stopSrc()
	wg.Wait()
	return err
}
