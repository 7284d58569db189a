package proj

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Limits against hostile WKT. The largest real CRS definitions (WKT2 with
// datum ensembles, usage areas and a bound CRS) run to about 6 kB and 7
// levels of brackets; these caps leave ample room.
const (
	maxWKTLen   = 64 << 10
	maxWKTDepth = 32
	maxWKTNodes = 4096
)

// wktNode is one KEYWORD[arg, arg, ...] of a WKT string.
type wktNode struct {
	kw   string // upper case
	args []wktValue
}

// wktValue is a quoted string, a number, a bare word (EAST, Cartesian) or
// a nested node.
type wktValue struct {
	kind byte // 's', 'n', 'w', 'o'
	str  string
	num  float64
	node *wktNode
}

// wktParser is a recursive-descent parser over the raw string.
type wktParser struct {
	s     string
	pos   int
	nodes int
}

func wktError(pos int, format string, a ...any) error {
	return fmt.Errorf("proj: WKT: %s at byte %d", fmt.Sprintf(format, a...), pos)
}

// parseWKTTree parses s into its root node.
func parseWKTTree(s string) (*wktNode, error) {
	if len(s) > maxWKTLen {
		return nil, fmt.Errorf("proj: WKT: %d bytes is more than the %d allowed", len(s), maxWKTLen)
	}
	p := &wktParser{s: s}
	p.space()
	if p.pos == len(p.s) {
		return nil, fmt.Errorf("proj: WKT: empty")
	}
	start := p.pos
	v, err := p.value(0)
	if err != nil {
		return nil, err
	}
	if v.kind != 'o' {
		return nil, wktError(start, "expected a keyword such as PROJCS[ or GEOGCRS[, found %q", clip(p.s[start:p.pos]))
	}
	p.space()
	if p.pos != len(p.s) {
		return nil, wktError(p.pos, "unexpected %q after the end", clip(p.s[p.pos:]))
	}
	return v.node, nil
}

func (p *wktParser) space() {
	for p.pos < len(p.s) {
		switch p.s[p.pos] {
		case ' ', '\t', '\n', '\r':
			p.pos++
		default:
			return
		}
	}
}

func isDelim(c byte) bool {
	switch c {
	case '[', ']', '(', ')', ',', '"', ' ', '\t', '\n', '\r':
		return true
	}
	return false
}

// value parses a string, number, word or node.
func (p *wktParser) value(depth int) (wktValue, error) {
	p.space()
	if p.pos >= len(p.s) {
		return wktValue{}, wktError(p.pos, "unexpected end")
	}
	start := p.pos
	c := p.s[p.pos]
	if c == '"' {
		str, err := p.quoted()
		return wktValue{kind: 's', str: str}, err
	}
	if isDelim(c) {
		return wktValue{}, wktError(p.pos, "unexpected %q", string(c))
	}
	for p.pos < len(p.s) && !isDelim(p.s[p.pos]) {
		p.pos++
	}
	word := p.s[start:p.pos]
	p.space()
	if p.pos < len(p.s) && (p.s[p.pos] == '[' || p.s[p.pos] == '(') {
		n, err := p.node(word, start, depth+1)
		return wktValue{kind: 'o', node: n}, err
	}
	if c == '+' || c == '-' || c == '.' || (c >= '0' && c <= '9') {
		v, err := strconv.ParseFloat(word, 64)
		if err != nil || math.IsInf(v, 0) || math.IsNaN(v) {
			return wktValue{}, wktError(start, "bad number %q", clip(word))
		}
		return wktValue{kind: 'n', num: v}, nil
	}
	return wktValue{kind: 'w', str: word}, nil
}

// node parses the bracketed argument list of keyword kw; p.pos is at the
// opening bracket.
func (p *wktParser) node(kw string, start, depth int) (*wktNode, error) {
	if depth > maxWKTDepth {
		return nil, wktError(start, "brackets nested deeper than %d", maxWKTDepth)
	}
	if p.nodes++; p.nodes > maxWKTNodes {
		return nil, wktError(start, "more than %d keywords", maxWKTNodes)
	}
	for i := 0; i < len(kw); i++ {
		c := kw[i]
		if !(c >= 'A' && c <= 'Z' || c >= 'a' && c <= 'z' || c == '_' || i > 0 && c >= '0' && c <= '9') {
			return nil, wktError(start, "bad keyword %q", clip(kw))
		}
	}
	open := p.s[p.pos]
	close := byte(']')
	if open == '(' {
		close = ')'
	}
	p.pos++
	n := &wktNode{kw: strings.ToUpper(kw)}
	p.space()
	if p.pos < len(p.s) && p.s[p.pos] == close {
		p.pos++
		return n, nil
	}
	for {
		v, err := p.value(depth)
		if err != nil {
			return nil, err
		}
		n.args = append(n.args, v)
		p.space()
		if p.pos >= len(p.s) {
			return nil, wktError(p.pos, "unclosed %s[ opened at byte %d", n.kw, start)
		}
		switch p.s[p.pos] {
		case ',':
			p.pos++
		case close:
			p.pos++
			return n, nil
		default:
			return nil, wktError(p.pos, "expected ',' or %q in %s[, found %q", string(close), n.kw, string(p.s[p.pos]))
		}
	}
}

// quoted parses a double-quoted string; a doubled quote stands for one.
func (p *wktParser) quoted() (string, error) {
	start := p.pos
	p.pos++
	var b strings.Builder
	for p.pos < len(p.s) {
		c := p.s[p.pos]
		p.pos++
		if c == '"' {
			if p.pos < len(p.s) && p.s[p.pos] == '"' {
				b.WriteByte('"')
				p.pos++
				continue
			}
			return b.String(), nil
		}
		b.WriteByte(c)
	}
	return "", wktError(start, "unterminated string")
}

// clip shortens text quoted in an error message.
func clip(s string) string {
	if len(s) > 40 {
		return s[:40] + "…"
	}
	return s
}

// name returns the node's first argument when it is a string.
func (n *wktNode) name() string {
	if len(n.args) > 0 && n.args[0].kind == 's' {
		return n.args[0].str
	}
	return ""
}

// number returns argument i as a number.
func (n *wktNode) number(i int) (float64, bool) {
	if i < len(n.args) && n.args[i].kind == 'n' {
		return n.args[i].num, true
	}
	return 0, false
}

// child returns the first direct child node with one of the keywords.
func (n *wktNode) child(kws ...string) *wktNode {
	for _, a := range n.args {
		if a.kind != 'o' {
			continue
		}
		for _, kw := range kws {
			if a.node.kw == kw {
				return a.node
			}
		}
	}
	return nil
}

// children returns all direct child nodes with the keyword.
func (n *wktNode) children(kw string) []*wktNode {
	var out []*wktNode
	for _, a := range n.args {
		if a.kind == 'o' && a.node.kw == kw {
			out = append(out, a.node)
		}
	}
	return out
}

// String writes the node back in compact WKT, for error messages.
func (n *wktNode) String() string {
	var b strings.Builder
	b.WriteString(n.kw)
	b.WriteByte('[')
	for i, a := range n.args {
		if i > 0 {
			b.WriteByte(',')
		}
		switch a.kind {
		case 's':
			b.WriteString(strconv.Quote(a.str))
		case 'n':
			b.WriteString(num(a.num))
		case 'w':
			b.WriteString(a.str)
		case 'o':
			b.WriteString(a.node.String())
		}
	}
	b.WriteByte(']')
	return b.String()
}

// head writes KEYWORD["name"] for error messages.
func (n *wktNode) head() string {
	return n.kw + "[" + strconv.Quote(n.name()) + "]"
}
