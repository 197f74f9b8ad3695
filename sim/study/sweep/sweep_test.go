package sweep_test

import (
	"bytes"
	"context"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"teeter/sim"
	"teeter/sim/rig"
	"teeter/sim/study/metric"
	"teeter/sim/study/plot"
	"teeter/sim/study/sweep"
)

func pendulumSweep(workers int, shard sweep.Shard) sweep.Spec {
	return sweep.Spec{
		Axes:     []sweep.Axis{{Path: "actuators.backlash", From: 0, To: 0.02, Steps: 3}, {Path: "ankle_loop.kp", From: 2, To: 6, Steps: 2}},
		Metrics:  []string{"peak_tilt", "osc_amplitude", "effort"},
		Duration: 1,
		Seeds:    2,
		Seed:     7,
		Workers:  workers,
		Shard:    shard,
	}
}

func csvBytes(t *testing.T, r *sweep.Result) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := r.WriteCSV(&b); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func TestSweepIndependentOfWorkersAndShards(t *testing.T) {
	r, err := rig.Load("builtin:pendulum", "", "")
	if err != nil {
		t.Fatal(err)
	}
	one, err := sweep.Run(context.Background(), r, pendulumSweep(1, sweep.Shard{}))
	if err != nil {
		t.Fatal(err)
	}
	two, err := sweep.Run(context.Background(), r, pendulumSweep(2, sweep.Shard{}))
	if err != nil {
		t.Fatal(err)
	}
	// The same simulations must give the same bytes however they were
	// scheduled (the sweep's own promise: seeded per point, grid order).
	a, b := csvBytes(t, one), csvBytes(t, two)
	if !bytes.Equal(a, b) {
		t.Fatalf("1 worker and 2 workers differ:\n%s\n%s", a, b)
	}
	if len(one.Points) != 6 || one.Total != 6 {
		t.Fatalf("got %d of %d points, want 6", len(one.Points), one.Total)
	}
	// Each point's mean and worst are those of its runs with its own seeds
	// (the definitions of the mean and of the largest, here of the
	// effort, which the sensor noise drives).
	ps, err := r.Params(one.Axes)
	if err != nil {
		t.Fatal(err)
	}
	pt := one.Points[4]
	v, err := ps.Variant(pt.Values)
	if err != nil {
		t.Fatal(err)
	}
	var efforts []float64
	for k := range 2 {
		o, err := v.Run(1, sim.Options{Seed: 7 + uint64(pt.Index*2+k)})
		if err != nil {
			t.Fatal(err)
		}
		efforts = append(efforts, metric.Effort(o))
	}
	if efforts[0] == efforts[1] {
		t.Errorf("the two seeds gave the same effort %g: the seed did not reach the runs", efforts[0])
	}
	if pt.Metrics[2] != (efforts[0]+efforts[1])/2 || pt.Worst[2] != math.Max(efforts[0], efforts[1]) {
		t.Errorf("point %d: mean %g and worst %g, its seeds' efforts %v", pt.Index, pt.Metrics[2], pt.Worst[2], efforts)
	}
	// The points differ from each other: the parameters reached the runs.
	if one.Points[0].Metrics[2] == one.Points[1].Metrics[2] && one.Points[0].Metrics[2] == one.Points[4].Metrics[2] {
		t.Errorf("effort did not change with kp or backlash: %v", one.Points)
	}
	s0, err := sweep.Run(context.Background(), r, pendulumSweep(2, sweep.Shard{0, 2}))
	if err != nil {
		t.Fatal(err)
	}
	s1, err := sweep.Run(context.Background(), r, pendulumSweep(2, sweep.Shard{1, 2}))
	if err != nil {
		t.Fatal(err)
	}
	if len(s0.Points) != 3 || len(s1.Points) != 3 {
		t.Fatalf("shards have %d and %d points, want 3 each", len(s0.Points), len(s1.Points))
	}
	// Through the files, as a job array would do it.
	dir := t.TempDir()
	var parts []*sweep.Result
	for i, s := range []*sweep.Result{s1, s0} {
		name := filepath.Join(dir, "shard"+string(rune('0'+i))+".csv")
		if err := os.WriteFile(name, csvBytes(t, s), 0o644); err != nil {
			t.Fatal(err)
		}
		f, err := os.Open(name)
		if err != nil {
			t.Fatal(err)
		}
		r, err := sweep.ReadCSV(name, f)
		f.Close()
		if err != nil {
			t.Fatal(err)
		}
		parts = append(parts, r)
	}
	merged, missing, err := sweep.Merge(parts...)
	if err != nil || len(missing) > 0 {
		t.Fatalf("merge: %v, missing %v", err, missing)
	}
	if m := csvBytes(t, merged); !bytes.Equal(m, a) {
		t.Fatalf("merged shards differ from the whole sweep:\n%s\n%s", m, a)
	}
	if _, missing, _ := sweep.Merge(parts[0]); len(missing) != 3 {
		t.Errorf("one shard alone: missing %v, want 3 points", missing)
	}
	for _, ext := range []string{".png", ".svg"} {
		file := filepath.Join(dir, "heat"+ext)
		if err := plot.Sweep(merged, plot.Options{Metric: "osc_amplitude"}, file); err != nil {
			t.Fatal(err)
		}
		if st, err := os.Stat(file); err != nil || st.Size() < 100 {
			t.Errorf("plot %s: %v", file, err)
		}
	}
}

func TestSweepFailedPointAndCancel(t *testing.T) {
	r, err := rig.Load("builtin:pendulum", "", "")
	if err != nil {
		t.Fatal(err)
	}
	// A negative backlash is refused by the model: that point fails, the
	// others run.
	spec := sweep.Spec{Axes: []sweep.Axis{{Path: "actuators.backlash", From: -0.01, To: 0.01, Steps: 3}}, Metrics: []string{"peak_tilt"}, Duration: 0.3, Workers: 2}
	res, err := sweep.Run(context.Background(), r, spec)
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Points) != 3 || res.Points[0].Err == "" || res.Points[1].Err != "" || res.Points[2].Err != "" {
		t.Fatalf("want point 0 failed and 1, 2 fine: %+v", res.Points)
	}
	text := string(csvBytes(t, res))
	if !strings.Contains(text, ",failed,") {
		t.Errorf("the CSV does not mark the failed point:\n%s", text)
	}
	// Cancel after the first point: what is done is kept and still reads.
	ctx, cancel := context.WithCancel(context.Background())
	spec = sweep.Spec{Axes: []sweep.Axis{{Path: "actuators.backlash", From: 0, To: 0.01, Steps: 20}}, Metrics: []string{"peak_tilt"}, Duration: 0.3, Workers: 1, Seeds: 1,
		Progress: func(done, total int) { cancel() }}
	res, err = sweep.Run(ctx, r, spec)
	if err != context.Canceled {
		t.Fatalf("cancelled sweep: err %v", err)
	}
	if len(res.Points) == 0 || len(res.Points) >= 20 {
		t.Fatalf("cancelled sweep kept %d points", len(res.Points))
	}
	back, err := sweep.ReadCSV("cancelled", bytes.NewReader(csvBytes(t, res)))
	if err != nil || len(back.Points) != len(res.Points) {
		t.Fatalf("cancelled sweep's CSV: %v", err)
	}
	if _, err := sweep.Run(context.Background(), r, sweep.Spec{Axes: []sweep.Axis{{Path: "no.such", Steps: 2}}, Metrics: []string{"peak_tilt"}, Duration: 1}); err == nil {
		t.Error("an unknown parameter path was accepted")
	}
}

func TestParseAxisAndShard(t *testing.T) {
	a, err := sweep.ParseAxis("actuators.backlash=0:2mm:9")
	if err != nil || a.Path != "actuators.backlash" || a.From != 0 || a.To != 0.002 || a.Steps != 9 || a.Unit != "m" {
		t.Fatalf("%+v %v", a, err)
	}
	if v := a.Value(8); v != 0.002 {
		t.Errorf("last value %g", v)
	}
	for _, bad := range []string{"x", "p=1:2", "p=a:2:3", "p=1:2:0", "=1:2:3", "p=1mm:2deg:3"} {
		if _, err := sweep.ParseAxis(bad); err == nil {
			t.Errorf("sweep.ParseAxis(%q) accepted", bad)
		}
	}
	if s, err := sweep.ParseShard("3/16"); err != nil || s != (sweep.Shard{3, 16}) {
		t.Errorf("%v %v", s, err)
	}
	for _, bad := range []string{"16/16", "-1/2", "1", "a/b", "0/0"} {
		if _, err := sweep.ParseShard(bad); err == nil {
			t.Errorf("sweep.ParseShard(%q) accepted", bad)
		}
	}
}
