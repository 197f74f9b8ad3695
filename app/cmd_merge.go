package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"os"

	"teeter/models"
	"teeter/sim/study/plot"
	"teeter/sim/study/sweep"
)

func init() {
	commands = append(commands, command{"merge", "join the CSV files of a sharded sweep into one, and plot it", cmdMerge})
}

func cmdMerge(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("merge", stderr)
	out := fs.String("csv", "", "write the merged CSV here (default: standard output)")
	plotFile := fs.String("plot", "", "plot a metric to this .png or .svg file")
	metric := fs.String("metric", "", "metric to plot (default: the first)")
	threshold := fs.String("threshold", "", "on the plot, mark where the metric crosses this level, e.g. 0.5deg (a contour on a heat map)")
	partial := fs.Bool("partial", false, "merge even if points are missing")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: teeter merge [options] SHARD.csv...")
		fs.PrintDefaults()
	}
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return err
		}
		return usageError{err}
	}
	if fs.NArg() == 0 {
		return usageError{errors.New("give the shard CSV files to merge")}
	}
	var parts []*sweep.Result
	for _, name := range fs.Args() {
		f, err := os.Open(name)
		if err != nil {
			return err
		}
		r, err := sweep.ReadCSV(name, f)
		f.Close()
		if err != nil {
			return err
		}
		parts = append(parts, r)
	}
	merged, missing, err := sweep.Merge(parts...)
	if err != nil {
		return err
	}
	if len(missing) > 0 && !*partial {
		return fmt.Errorf("%d of %d points are missing (first: point %d); run the missing shards or pass --partial", len(missing), merged.Total, missing[0])
	}
	if *out != "" {
		if err := models.WriteFileAtomic(*out, merged.WriteCSV); err != nil {
			return err
		}
	} else if err := merged.WriteCSV(stdout); err != nil {
		return err
	}
	if *plotFile != "" {
		opt, err := plotOptions(merged, *metric, *threshold)
		if err != nil {
			return err
		}
		return plot.Sweep(merged, opt, *plotFile)
	}
	return nil
}
