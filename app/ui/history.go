package ui

// change is one undoable edit: a gain or a robot parameter going from
// Old to New.
type change struct {
	Kind     string // "gain" or "robot"
	Path     string
	Old, New float64
	open     bool // still being dragged: further moves update New
}

// history is an undo and redo stack of changes.
type history struct {
	done, undone []change
}

// record adds a change; while a slider drags, moves of the same path are
// folded into one change until close is called.
func (h *history) record(c change) {
	if n := len(h.done); n > 0 && h.done[n-1].open && h.done[n-1].Kind == c.Kind && h.done[n-1].Path == c.Path {
		h.done[n-1].New = c.New
		h.done[n-1].open = c.open
	} else {
		h.close()
		h.done = append(h.done, c)
	}
	h.undone = h.undone[:0]
}

// close ends the drag of the last change.
func (h *history) close() {
	if n := len(h.done); n > 0 {
		h.done[n-1].open = false
	}
}

// undo returns the change to revert, if any.
func (h *history) undo() (change, bool) {
	n := len(h.done)
	if n == 0 {
		return change{}, false
	}
	c := h.done[n-1]
	c.open = false
	h.done = h.done[:n-1]
	h.undone = append(h.undone, c)
	return c, true
}

// redo returns the change to apply again, if any.
func (h *history) redo() (change, bool) {
	n := len(h.undone)
	if n == 0 {
		return change{}, false
	}
	c := h.undone[n-1]
	h.undone = h.undone[:n-1]
	h.done = append(h.done, c)
	return c, true
}
