package model

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"strings"

	"go.yaml.in/yaml/v3"
)

// YAMLProblemKind says what kind of problem ReadYAML found.
type YAMLProblemKind int

const (
	// YAMLSyntax is text that is not one YAML document: not valid YAML,
	// a second document, an alias that contains itself or that expands
	// the document beyond MaxAliasExpansion values.
	YAMLSyntax YAMLProblemKind = iota
	// YAMLKey is a key that a strict schema cannot read: a merge key
	// (<<) or a key that is a mapping or a list.
	YAMLKey
)

// MaxAliasExpansion bounds how many values aliases may add to a YAML
// document when they are resolved, against documents that repeat an
// alias of an alias until they fill the memory.
const MaxAliasExpansion = 1_000_000

// YAMLProblem is what ReadYAML found wrong, without the file's name:
// package model makes it a *SpecError and package plan a *plan.Error.
type YAMLProblem struct {
	// Line is the line the problem is on, or 0.
	Line int
	// Msg says what is wrong.
	Msg  string
	Kind YAMLProblemKind
	// Err is the YAML parser's error, or nil.
	Err error
}

// ReadYAML reads data as exactly one YAML document for a schema that is
// read strictly, as specs and plans are, and returns the document node
// (with no content when data holds only comments).
//
// A second document (after ---, or after ... and more text) is refused,
// not ignored. Aliases are resolved: each *name is replaced, in the node
// tree, by the value its &name anchor marks, so that the schema reads
// the value wherever it is used, and errors inside it give the lines of
// the anchored text. An alias inside the value it refers to, and
// aliases adding more than MaxAliasExpansion values, are refused, and so
// are merge keys (<<, a YAML 1.1 extension that would let one mapping
// override another's keys unseen) and keys that are mappings or lists.
func ReadYAML(data []byte) (*yaml.Node, *YAMLProblem) {
	dec := yaml.NewDecoder(bytes.NewReader(data))
	var doc yaml.Node
	if err := dec.Decode(&doc); err != nil && !errors.Is(err, io.EOF) {
		return nil, syntaxProblem(err)
	}
	var next yaml.Node
	switch err := dec.Decode(&next); {
	case err == nil:
		return nil, &YAMLProblem{Line: next.Line, Msg: "a second YAML document starts here; the file must hold one document", Kind: YAMLSyntax}
	case !errors.Is(err, io.EOF):
		return nil, syntaxProblem(err)
	}
	r := resolver{state: map[*yaml.Node]int8{}, size: map[*yaml.Node]int{}}
	if _, p := r.walk(&doc); p != nil {
		return nil, p
	}
	return &doc, nil
}

func syntaxProblem(err error) *YAMLProblem {
	return &YAMLProblem{Msg: "not valid YAML: " + strings.TrimPrefix(err.Error(), "yaml: "), Kind: YAMLSyntax, Err: err}
}

// resolver replaces aliases by their values and checks mapping keys. It
// visits each node once; size counts the values under a node as they
// would be after every alias were copied out, and extra the values that
// aliases add.
type resolver struct {
	state map[*yaml.Node]int8 // 1 while its content is walked, 2 after
	size  map[*yaml.Node]int
	extra int
}

func (r *resolver) walk(n *yaml.Node) (int, *YAMLProblem) {
	if r.state[n] == 2 {
		return r.size[n], nil
	}
	r.state[n] = 1
	total := 1
	for i, c := range n.Content {
		alias := c.Kind == yaml.AliasNode
		if alias {
			t := c.Alias
			if t == nil {
				return 0, &YAMLProblem{Line: c.Line, Msg: fmt.Sprintf("the alias *%s has no value", c.Value), Kind: YAMLSyntax}
			}
			if r.state[t] == 1 {
				return 0, &YAMLProblem{Line: c.Line, Msg: fmt.Sprintf("the alias *%s is inside the value it refers to", c.Value), Kind: YAMLSyntax}
			}
			n.Content[i] = t
			c = t
		}
		s, p := r.walk(c)
		if p != nil {
			return 0, p
		}
		if alias {
			r.extra += s
			if r.extra > MaxAliasExpansion {
				return 0, &YAMLProblem{Line: n.Content[i].Line, Msg: fmt.Sprintf("aliases expand the document by more than %d values; write the values out", MaxAliasExpansion), Kind: YAMLSyntax}
			}
		}
		total += s
	}
	if n.Kind == yaml.MappingNode {
		for i := 0; i < len(n.Content); i += 2 {
			k := n.Content[i]
			switch {
			case k.Kind != yaml.ScalarNode:
				return 0, &YAMLProblem{Line: k.Line, Msg: "a key must be a single value, not a mapping or a list", Kind: YAMLKey}
			case k.ShortTag() == "!!merge":
				return 0, &YAMLProblem{Line: k.Line, Msg: "merge keys (<<) are not read: write the keys out (an alias *name may stand for a whole value)", Kind: YAMLKey}
			}
		}
	}
	r.state[n], r.size[n] = 2, total
	return total, nil
}
