package models

import (
	"errors"
	"os"
	"strings"

	"github.com/goccy/go-yaml/ast"
	"github.com/goccy/go-yaml/parser"
	"github.com/goccy/go-yaml/token"
)

// ValueKind tells what a Value holds.
type ValueKind int

const (
	Null ValueKind = iota
	Scalar
	List
	Map
)

func (k ValueKind) String() string {
	return [...]string{"nothing", "a value", "a list", "a mapping"}[k]
}

// Value is a YAML document reduced to what a schema needs: scalars as text,
// lists, and mappings that keep their key order, each with its position.
// Schema walkers in this package and in the controller package read it.
// It is built from go-yaml's syntax tree rather than by decoding into
// structs because decoding drops positions, quoting and key order, and
// every problem must name its line and column and every number keeps the
// unit it was written with.
type Value struct {
	Kind   ValueKind
	Text   string  // Scalar: the text as written, without quotes
	Quoted bool    // Scalar: written in quotes, so never a number
	Items  []Value // List
	Fields []Field // Map, in file order
	Pos    Pos
}

// Field is one key of a mapping.
type Field struct {
	Key    string
	KeyPos Pos
	Value  Value
}

// Get returns the field with the given key of a mapping.
func (v *Value) Get(key string) (*Field, bool) {
	for i := range v.Fields {
		if v.Fields[i].Key == key {
			return &v.Fields[i], true
		}
	}
	return nil, false
}

// maxValueDepth bounds nesting so that hostile input cannot exhaust the stack.
const maxValueDepth = 64

// ParseValue parses YAML bytes into a Value. An empty document is a Null value.
// Syntax errors are reported as Problems with the position the parser gives.
func ParseValue(file string, data []byte) (v Value, err error) {
	// The YAML library is not ours; a crash inside it on odd input must
	// still come out as a problem, not take the program down.
	defer func() {
		if e := recover(); e != nil {
			var ps Problems
			ps.Add(Pos{File: file}, "", "YAML syntax: the file could not be read (%v)", e)
			v, err = Value{}, ps.Err()
		}
	}()
	f, err := parser.ParseBytes(data, 0)
	if err != nil {
		return Value{}, syntaxProblem(file, err)
	}
	if len(f.Docs) == 0 || f.Docs[0].Body == nil {
		return Value{Kind: Null, Pos: Pos{File: file, Line: 1, Col: 1}}, nil
	}
	if len(f.Docs) > 1 {
		var ps Problems
		ps.Add(nodePos(file, f.Docs[1].Body), "", "more than one YAML document in the file")
		return Value{}, ps.Err()
	}
	var ps Problems
	v = convert(file, f.Docs[0].Body, 0, &ps)
	return v, ps.Err()
}

// ReadValue reads and parses a YAML file.
func ReadValue(file string) (Value, error) {
	data, err := os.ReadFile(file)
	if err != nil {
		return Value{}, err
	}
	return ParseValue(file, data)
}

func syntaxProblem(file string, err error) error {
	var ps Problems
	pos := Pos{File: file}
	msg := err.Error()
	var ye interface {
		GetToken() *token.Token
		GetMessage() string
	}
	if errors.As(err, &ye) {
		msg = ye.GetMessage()
		if t := ye.GetToken(); t != nil && t.Position != nil {
			pos.Line, pos.Col = t.Position.Line, t.Position.Column
		}
	}
	// The library's message may carry a source excerpt over several lines; keep the first.
	if i := strings.IndexByte(msg, '\n'); i >= 0 {
		msg = msg[:i]
	}
	ps.Add(pos, "", "YAML syntax: %s", strings.TrimSpace(msg))
	return ps.Err()
}

func nodePos(file string, n ast.Node) Pos {
	if n == nil || n.GetToken() == nil || n.GetToken().Position == nil {
		return Pos{File: file}
	}
	p := n.GetToken().Position
	return Pos{File: file, Line: p.Line, Col: p.Column}
}

func convert(file string, n ast.Node, depth int, ps *Problems) Value {
	pos := nodePos(file, n)
	if depth > maxValueDepth {
		ps.Add(pos, "", "nested deeper than %d levels", maxValueDepth)
		return Value{Kind: Null, Pos: pos}
	}
	switch n := n.(type) {
	case nil:
		return Value{Kind: Null, Pos: pos}
	case *ast.NullNode:
		return Value{Kind: Null, Pos: pos}
	case *ast.TagNode:
		return convert(file, n.Value, depth+1, ps)
	case *ast.AnchorNode:
		return convert(file, n.Value, depth+1, ps)
	case *ast.AliasNode:
		ps.Add(pos, "", "YAML aliases are not supported; write the value out")
		return Value{Kind: Null, Pos: pos}
	case *ast.MappingNode:
		v := Value{Kind: Map, Pos: pos}
		for _, mv := range n.Values {
			v.Fields = append(v.Fields, convertField(file, mv, depth, ps))
		}
		return v
	case *ast.MappingValueNode:
		return Value{Kind: Map, Pos: pos, Fields: []Field{convertField(file, n, depth, ps)}}
	case *ast.SequenceNode:
		v := Value{Kind: List, Pos: pos}
		for _, it := range n.Values {
			v.Items = append(v.Items, convert(file, it, depth+1, ps))
		}
		return v
	case *ast.StringNode:
		tk := n.GetToken()
		quoted := tk != nil && (tk.Type == token.SingleQuoteType || tk.Type == token.DoubleQuoteType)
		return Value{Kind: Scalar, Text: n.Value, Quoted: quoted, Pos: pos}
	case *ast.LiteralNode:
		return Value{Kind: Scalar, Text: n.Value.Value, Quoted: true, Pos: pos}
	case *ast.MergeKeyNode:
		ps.Add(pos, "", "YAML merge keys are not supported; write the fields out")
		return Value{Kind: Null, Pos: pos}
	case ast.ScalarNode:
		if n.GetToken() == nil {
			return Value{Kind: Null, Pos: pos}
		}
		return Value{Kind: Scalar, Text: n.GetToken().Value, Pos: pos}
	default:
		ps.Add(pos, "", "unexpected YAML element %s", n.Type())
		return Value{Kind: Null, Pos: pos}
	}
}

func convertField(file string, mv *ast.MappingValueNode, depth int, ps *Problems) Field {
	key := ""
	if mv.Key != nil {
		if t := mv.Key.GetToken(); t != nil {
			key = t.Value
		}
	}
	return Field{Key: key, KeyPos: nodePos(file, mv.Key), Value: convert(file, mv.Value, depth+1, ps)}
}

// Clone returns a deep copy of v, sharing no lists with it.
func (v Value) Clone() Value {
	c := v
	if v.Items != nil {
		c.Items = make([]Value, len(v.Items))
		for i := range v.Items {
			c.Items[i] = v.Items[i].Clone()
		}
	}
	if v.Fields != nil {
		c.Fields = make([]Field, len(v.Fields))
		for i, f := range v.Fields {
			c.Fields[i] = Field{Key: f.Key, KeyPos: f.KeyPos, Value: f.Value.Clone()}
		}
	}
	return c
}
