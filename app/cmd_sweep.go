package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strings"
	"sync"
	"time"

	"github.com/schollz/progressbar/v3"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
	"teeter/sim/study/metric"
	"teeter/sim/study/plot"
	"teeter/sim/study/sweep"
)

func init() {
	commands = append(commands, command{"sweep", "run a parameter sweep on all cores, to CSV and a plot", cmdSweep})
}

func cmdSweep(args []string, stdout, stderr io.Writer) error {
	fs, rf := newSimFlags("sweep", stderr)
	rf.addExecFlags(fs)
	var params, shoves multiFlag
	fs.Var(&params, "param", "PATH=FROM:TO:STEPS, a robot parameter or a gain (repeat for a 2-D grid)")
	fs.Var(&shoves, "shove", "a shove in every run, e.g. at=1s,impulse=2N*s,dir=left (repeatable)")
	metricNames := fs.String("metric", "peak_tilt", "metric(s) to record, comma separated ('teeter sweep -metrics' lists them)")
	listMetrics := fs.Bool("metrics", false, "list the metrics and exit")
	durText := fs.String("duration", "5s", "simulated time per point")
	csvFile := fs.String("csv", "", "write the results to this CSV file")
	plotFile := fs.String("plot", "", "plot the first metric to this .png or .svg file")
	threshold := fs.String("threshold", "", "on the plot, mark where the metric crosses this level, e.g. 0.5deg (a contour on a heat map)")
	workers := fs.Int("workers", 0, "runs in parallel (default: every core)")
	shardText := fs.String("shard", "", "I/N: run only every N-th point from point I, for a job array")
	seeds := fs.Int("seeds", sweep.DefaultSeeds, "noise seeds each point runs with; the CSV gives the mean and the worst")
	seed := fs.Uint64("seed", 1, "first seed; point i's k-th run has seed+i*seeds+k")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *listMetrics {
		for _, m := range metric.All() {
			fmt.Fprintf(stdout, "%-14s %-9s %s\n", m.Name, m.Unit, m.Meaning)
		}
		return nil
	}
	if *seeds < 1 {
		return usageError{fmt.Errorf("--seeds %d: want at least 1", *seeds)}
	}
	spec := sweep.Spec{Metrics: strings.Split(*metricNames, ","), Seeds: *seeds, Seed: *seed, Workers: *workers}
	if err := fillSweepSpec(&spec, params, shoves, *durText, *shardText); err != nil {
		return err
	}
	var res *sweep.Result
	var runErr error
	if err := runStudy(rf, stderr, "sweep", func(ctx context.Context, r *rig.Rig, bar *progress) {
		spec.Progress = bar.update
		res, runErr = sweep.Run(ctx, r, spec)
	}); err != nil {
		return err
	}
	if res == nil {
		return runErr
	}
	if err := writeSweep(stdout, res, *csvFile); err != nil {
		return err
	}
	if *plotFile != "" && runErr == nil {
		opt, err := plotOptions(res, spec.Metrics[0], *threshold)
		if err != nil {
			return err
		}
		if err := plot.Sweep(res, opt, *plotFile); err != nil {
			return err
		}
	}
	failed := 0
	for _, p := range res.Points {
		if p.Err != "" {
			failed++
		}
	}
	if failed > 0 {
		fmt.Fprintf(stderr, "teeter sweep: %d of %d points failed (see the error column)\n", failed, len(res.Points))
	}
	if runErr != nil {
		return fmt.Errorf("stopped after %d points (kept in the CSV): %v", len(res.Points), runErr)
	}
	return nil
}

// fillSweepSpec reads the grid, the duration, the shoves and the shard
// from their flags into spec.
func fillSweepSpec(spec *sweep.Spec, params, shoves []string, durText, shardText string) error {
	if len(params) == 0 {
		return usageError{errors.New("give at least one --param PATH=FROM:TO:STEPS")}
	}
	for _, p := range params {
		a, err := sweep.ParseAxis(p)
		if err != nil {
			return usageError{err}
		}
		spec.Axes = append(spec.Axes, a)
	}
	var err error
	if spec.Duration, err = parseDuration(durText); err != nil {
		return err
	}
	if spec.Shoves, err = parseShoves(shoves); err != nil {
		return err
	}
	if shardText != "" {
		if spec.Shard, err = sweep.ParseShard(shardText); err != nil {
			return usageError{err}
		}
	}
	return nil
}

// plotOptions are plot.OptionsFor, its errors a misuse of the flags.
func plotOptions(res *sweep.Result, metricName, threshold string) (plot.Options, error) {
	opt, err := plot.OptionsFor(res, metricName, threshold)
	if err != nil {
		return opt, usageError{fmt.Errorf("--threshold: %v", err)}
	}
	return opt, nil
}

// writeSweep writes the results as CSV to csvFile, or to stdout without one.
func writeSweep(stdout io.Writer, res *sweep.Result, csvFile string) error {
	if csvFile != "" {
		return models.WriteFileAtomic(csvFile, res.WriteCSV)
	}
	return res.WriteCSV(stdout)
}

func parseDuration(text string) (float64, error) {
	d, _, err := models.ParseQuantity(text, models.Duration)
	if err != nil || d <= 0 {
		return 0, usageError{fmt.Errorf("--duration %q: want a positive duration such as 5s", text)}
	}
	return d, nil
}

func parseShoves(specs []string) ([]sim.Shove, error) {
	var out []sim.Shove
	for _, s := range specs {
		sh, err := sim.ParseShove(s)
		if err != nil {
			return nil, usageError{err}
		}
		out = append(out, sh)
	}
	return out, nil
}

// runStudy loads the rig the flags give and runs a study on it with a
// context that an interrupt cancels and a progress bar on stderr.
func runStudy(rf rigFlags, stderr io.Writer, what string, run func(ctx context.Context, r *rig.Rig, bar *progress)) error {
	r, err := rf.load()
	if err != nil {
		return err
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	bar := newProgress(stderr, what)
	run(ctx, r, bar)
	bar.finish()
	return nil
}

// progress draws a bar on a terminal for a study that has run for more
// than a second; elsewhere (pipes, files, tests) it stays silent.
type progress struct {
	mu    sync.Mutex
	w     io.Writer
	what  string
	start time.Time
	bar   *progressbar.ProgressBar
}

func newProgress(stderr io.Writer, what string) *progress {
	p := &progress{what: what, start: time.Now()}
	if f, ok := stderr.(*os.File); ok {
		if st, err := f.Stat(); err == nil && st.Mode()&os.ModeCharDevice != 0 {
			p.w = f
		}
	}
	return p
}

func (p *progress) update(done, total int) {
	if p.w == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.bar == nil {
		if time.Since(p.start) < time.Second {
			return
		}
		p.bar = progressbar.NewOptions(total, progressbar.OptionSetWriter(p.w), progressbar.OptionSetDescription(p.what),
			progressbar.OptionThrottle(100*time.Millisecond), progressbar.OptionClearOnFinish(), progressbar.OptionShowCount())
	}
	p.bar.ChangeMax(total)
	p.bar.Set(done)
}

func (p *progress) describe(text string) {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.bar != nil {
		p.bar.Describe(text)
	}
}

func (p *progress) finish() {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.bar != nil {
		p.bar.Finish()
		fmt.Fprintln(p.w)
	}
}
