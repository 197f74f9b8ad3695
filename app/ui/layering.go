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
	// Find the feedback edges by a depth-first walk along the wires from the
	// blocks without inputs (the sensors and sources): an edge into a block
	// still on the walk's stack closes a loop.
	outputs := make([][]int, n)
	for i, ins := range inputs {
		for _, j := range ins {
			if j >= 0 && j < n && j != i {
				outputs[j] = append(outputs[j], i)
			}
		}
	}
	feedback := map[[2]int]bool{}
	state := make([]byte, n) // 0 unvisited, 1 on the stack, 2 done
	var walk func(j int)
	walk = func(j int) {
		state[j] = 1
		for _, i := range outputs[j] {
			switch state[i] {
			case 0:
				walk(i)
			case 1:
				feedback[[2]int{j, i}] = true
			}
		}
		state[j] = 2
	}
	for i := range n {
		if len(inputs[i]) == 0 && state[i] == 0 {
			walk(i)
		}
	}
	for i := range n {
		if state[i] == 0 {
			walk(i)
		}
	}
	// Longest path over the remaining edges, which form no cycle.
	column = make([]int, n)
	done := make([]bool, n)
	var layer func(i int) int
	layer = func(i int) int {
		if done[i] {
			return column[i]
		}
		done[i] = true
		c := 0
		for _, j := range inputs[i] {
			if j < 0 || j >= n || j == i || feedback[[2]int{j, i}] {
				continue
			}
			c = max(c, layer(j)+1)
		}
		column[i] = c
		return c
	}
	for i := range n {
		layer(i)
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
