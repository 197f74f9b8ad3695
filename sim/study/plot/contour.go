package plot

import "math"

// segment is one straight piece of a contour line.
type segment struct{ x0, y0, x1, y1 float64 }

// contour traces where z, given on the grid xs by ys (z[row][col], row
// along ys), crosses level, by marching squares with linear
// interpolation along the cell edges (Lorensen and Cline, 1987, in two
// dimensions). A cell with a NaN corner is skipped; a saddle cell is
// resolved by its centre's mean.
func contour(xs, ys []float64, z [][]float64, level float64) []segment {
	var out []segment
	for r := 0; r+1 < len(ys); r++ {
		for c := 0; c+1 < len(xs); c++ {
			// Corners counter-clockwise from (c, r).
			cx := [4]float64{xs[c], xs[c+1], xs[c+1], xs[c]}
			cy := [4]float64{ys[r], ys[r], ys[r+1], ys[r+1]}
			cz := [4]float64{z[r][c], z[r][c+1], z[r+1][c+1], z[r+1][c]}
			if math.IsNaN(cz[0] + cz[1] + cz[2] + cz[3]) {
				continue
			}
			// Crossing points on the edges from corner i to i+1.
			var px, py [4]float64
			var cut [4]bool
			for i := range 4 {
				j := (i + 1) % 4
				a, b := cz[i]-level, cz[j]-level
				if (a < 0) != (b < 0) {
					t := a / (a - b)
					px[i], py[i] = cx[i]+t*(cx[j]-cx[i]), cy[i]+t*(cy[j]-cy[i])
					cut[i] = true
				}
			}
			var edges []int
			for i := range 4 {
				if cut[i] {
					edges = append(edges, i)
				}
			}
			pair := func(i, j int) { out = append(out, segment{px[i], py[i], px[j], py[j]}) }
			switch len(edges) {
			case 2:
				pair(edges[0], edges[1])
			case 4:
				// A saddle: join the edges around the corners on the
				// centre's side.
				centreBelow := (cz[0]+cz[1]+cz[2]+cz[3])/4 < level
				if (cz[0] < level) == centreBelow {
					pair(0, 1)
					pair(2, 3)
				} else {
					pair(3, 0)
					pair(1, 2)
				}
			}
		}
	}
	return out
}
