package ui

import "sort"

// layerNodes places each node of a directed graph in a column by
// longest-path layering: a node with no inputs goes in column 0 and every
// other node one column right of its furthest input. inputs[i] lists the
// nodes feeding node i. Edges that close a cycle (a feedback wire) are
// ignored for the layering, so cycles cannot loop forever.
//
// It also returns the row of each node within its column, ordered by the
// mean row of its inputs (the barycentre heuristic) to cut down crossings.
func layerNodes(inputs [][]int) (column, row []int) {
	n := len(inputs)
	column = make([]int, n)
	state := make([]byte, n) // 0 unvisited, 1 on the stack, 2 done
	var visit func(i int) int
	visit = func(i int) int {
		switch state[i] {
		case 1:
			return -1 // back edge: a cycle
		case 2:
			return column[i]
		}
		state[i] = 1
		c := 0
		for _, j := range inputs[i] {
			if j < 0 || j >= n || j == i {
				continue
			}
			if cj := visit(j); cj >= 0 && cj+1 > c {
				c = cj + 1
			}
		}
		state[i] = 2
		column[i] = c
		return c
	}
	for i := range inputs {
		visit(i)
	}

	maxCol := 0
	for _, c := range column {
		maxCol = max(maxCol, c)
	}
	byCol := make([][]int, maxCol+1)
	for i, c := range column {
		byCol[c] = append(byCol[c], i)
	}
	row = make([]int, n)
	for _, nodes := range byCol {
		key := make(map[int]float64, len(nodes))
		for k, i := range nodes {
			sum, cnt := 0.0, 0
			for _, j := range inputs[i] {
				if j >= 0 && j < n && column[j] < column[i] {
					sum += float64(row[j])
					cnt++
				}
			}
			if cnt > 0 {
				key[i] = sum / float64(cnt)
			} else {
				key[i] = float64(k)
			}
		}
		sort.SliceStable(nodes, func(a, b int) bool { return key[nodes[a]] < key[nodes[b]] })
		for r, i := range nodes {
			row[i] = r
		}
	}
	return column, row
}
