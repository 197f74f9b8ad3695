package models

import (
	"fmt"
	"sort"
	"strings"
)

// Pos is a place in a source file. Line and Col count from 1; zero means unknown.
type Pos struct {
	File string
	Line int
	Col  int
}

func (p Pos) String() string {
	switch {
	case p.File == "" && p.Line == 0:
		return "?"
	case p.Line == 0:
		return p.File
	default:
		return fmt.Sprintf("%s:%d:%d", p.File, p.Line, p.Col)
	}
}

// Problem is one thing wrong with an input: where, which field, and what.
type Problem struct {
	Pos  Pos
	Path string // field path such as "links[2].mass" or "controller.blocks.body_roll.kp"
	Msg  string
}

func (p Problem) String() string {
	if p.Path == "" {
		return fmt.Sprintf("%s: %s", p.Pos, p.Msg)
	}
	return fmt.Sprintf("%s: %s: %s", p.Pos, p.Path, p.Msg)
}

// Problems collects every problem found in one input, so a user can fix them
// all in one go. It is an error when it holds at least one problem.
type Problems []Problem

// Add records a problem; the message is formatted like fmt.Sprintf.
func (ps *Problems) Add(pos Pos, path, format string, args ...any) {
	*ps = append(*ps, Problem{Pos: pos, Path: path, Msg: fmt.Sprintf(format, args...)})
}

// Err returns nil when there are no problems, or the problems sorted by
// position as an error.
func (ps Problems) Err() error {
	if len(ps) == 0 {
		return nil
	}
	sorted := append(Problems(nil), ps...)
	sort.SliceStable(sorted, func(i, j int) bool {
		a, b := sorted[i].Pos, sorted[j].Pos
		if a.File != b.File {
			return a.File < b.File
		}
		if a.Line != b.Line {
			return a.Line < b.Line
		}
		return a.Col < b.Col
	})
	return sorted
}

func (ps Problems) Error() string {
	lines := make([]string, len(ps))
	for i, p := range ps {
		lines[i] = p.String()
	}
	return strings.Join(lines, "\n")
}
