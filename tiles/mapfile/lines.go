package mapfile

import (
	"errors"
	"regexp"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"
)

// Lines tells on which line of a TOML text each key is set, for error
// messages: the TOML decoder keeps key positions to itself. Names are
// dotted paths; an element of an array of tables carries its 1-based number
// ("category[2].color"), and a table's own name gives its header line (or
// the first line of a dotted key or inline table that makes it). Keys set
// in [table] headers, dotted keys ("tiles.min_zoom = 3") and inline tables
// ("tiles = { min_zoom = 3 }") are all found.
type Lines struct {
	at    map[string]int
	order []keyLine
}

type keyLine struct {
	name  string // with array numbers: "category[2].color"
	plain string // without: "category.color"
	line  int
}

// FindLines scans a TOML text for its keys. It never fails: where the text
// is not TOML it skips to the next line, and the decoder reports the error.
func FindLines(data []byte) *Lines {
	l := &Lines{at: map[string]int{}}
	s := &lineScanner{s: string(data), line: 1, l: l, count: map[string]int{}}
	s.document()
	return l
}

// Line returns the line that sets the named key, 0 when the text does not
// set it.
func (l *Lines) Line(name string) int { return l.at[name] }

// Has reports whether the text sets the named key.
func (l *Lines) Has(name string) bool { return l.at[name] > 0 }

// Near returns the line of the named key or, when the text does not set it,
// of the nearest enclosing table that it does set; 0 when none is set.
func (l *Lines) Near(name string) int {
	for name != "" {
		if n := l.at[name]; n > 0 {
			return n
		}
		i := strings.LastIndexAny(name, ".[")
		if i < 0 {
			return 0
		}
		name = name[:i]
	}
	return 0
}

// Find returns the name (with array numbers) and line of the first key, in
// file order, whose path is k: the decoder names keys in arrays of tables
// without saying which element. It returns k's dotted form and 0 when the
// text does not set k.
func (l *Lines) Find(k toml.Key) (name string, line int) {
	return l.find(strings.Join(k, "."), 0)
}

// find looks up a plain dotted key, preferring the entry on line (when
// line > 0).
func (l *Lines) find(plain string, line int) (string, int) {
	first := -1
	for i, e := range l.order {
		if e.plain != plain {
			continue
		}
		if line == 0 || e.line == line {
			return e.name, e.line
		}
		if first < 0 {
			first = i
		}
	}
	if line > 0 {
		return plain, line
	}
	if first >= 0 {
		return l.order[first].name, l.order[first].line
	}
	return plain, 0
}

func (l *Lines) add(name string, line int) {
	if _, ok := l.at[name]; ok {
		return
	}
	l.at[name] = line
	l.order = append(l.order, keyLine{name: name, plain: arrayNumberRE.ReplaceAllString(name, ""), line: line})
}

var arrayNumberRE = regexp.MustCompile(`\[\d+\]`)

// typeErrRE reads the decoder's type errors ("incompatible types", arrays
// of the wrong length), which BurntSushi/toml v1.6.0 returns as plain text
// (decode.go, MetaData.e) with no typed position, unlike its ParseError.
var typeErrRE = regexp.MustCompile(`^toml: (?:line (\d+) )?\(last key "(.*?)"\): (.*)$`)

// DecodeError turns an error of toml.Decode on the text whose keys are l
// into an *Error naming path, the line and the key.
func DecodeError(path string, l *Lines, err error) error {
	var pe toml.ParseError
	if errors.As(err, &pe) {
		name, line := l.find(pe.LastKey, pe.Position.Line)
		if pe.LastKey == "" {
			name = ""
		}
		return &Error{Path: path, Line: line, Key: name, Msg: pe.Message}
	}
	if g := typeErrRE.FindStringSubmatch(err.Error()); g != nil {
		line, _ := strconv.Atoi(g[1])
		name, line := l.find(g[2], line)
		return &Error{Path: path, Line: line, Key: name, Msg: g[3]}
	}
	return &Error{Path: path, Msg: strings.TrimPrefix(err.Error(), "toml: ")}
}

// lineScanner walks TOML text far enough to know where keys are: keys,
// table headers, strings (which may hold "=", "#" or newlines), arrays and
// inline tables. Values themselves are skipped.
type lineScanner struct {
	s     string
	i     int
	line  int
	l     *Lines
	table string         // current table's name, with array numbers
	count map[string]int // elements so far of each array of tables
	quiet int            // > 0 inside arrays, whose inline tables' keys are not recorded
}

func (s *lineScanner) peek(k int) byte {
	if s.i+k < len(s.s) {
		return s.s[s.i+k]
	}
	return 0
}

func (s *lineScanner) next() {
	if s.s[s.i] == '\n' {
		s.line++
	}
	s.i++
}

// blank skips spaces and tabs, and newlines and comments when lines is set.
func (s *lineScanner) blank(lines bool) {
	for s.i < len(s.s) {
		switch c := s.s[s.i]; {
		case c == ' ' || c == '\t' || c == '\r':
			s.i++
		case c == '\n' && lines:
			s.next()
		case c == '#':
			for s.i < len(s.s) && s.s[s.i] != '\n' {
				s.i++
			}
		default:
			return
		}
	}
}

// skipLine moves past the end of the current line.
func (s *lineScanner) skipLine() {
	for s.i < len(s.s) && s.s[s.i] != '\n' {
		s.i++
	}
	if s.i < len(s.s) {
		s.next()
	}
}

func (s *lineScanner) document() {
	for {
		s.blank(true)
		if s.i >= len(s.s) {
			return
		}
		if s.s[s.i] == '[' {
			s.header()
			continue
		}
		start := s.i
		s.keyValue(s.table)
		if s.i == start {
			s.skipLine()
		}
	}
}

// header reads a [table] or [[array]] line.
func (s *lineScanner) header() {
	line := s.line
	array := s.peek(1) == '['
	s.i++
	if array {
		s.i++
	}
	s.blank(false)
	path, ok := s.key()
	if !ok {
		s.skipLine()
		return
	}
	name := ""
	for j, seg := range path {
		if j > 0 {
			name += "."
		}
		name += seg
		if j == len(path)-1 && array {
			s.count[name]++
			name += "[" + strconv.Itoa(s.count[name]) + "]"
		} else if n := s.count[name]; n > 0 {
			name += "[" + strconv.Itoa(n) + "]"
		}
	}
	s.table = name
	s.l.add(name, line)
	s.skipLine()
}

// keyValue reads "key = value" within the table prefix.
func (s *lineScanner) keyValue(prefix string) {
	line := s.line
	path, ok := s.key()
	if !ok {
		return
	}
	s.blank(false)
	if s.peek(0) != '=' {
		return
	}
	s.i++
	name := prefix
	for _, seg := range path {
		if name != "" {
			name += "."
		}
		name += seg
		if s.quiet == 0 {
			s.l.add(name, line)
		}
	}
	s.blank(false)
	s.value(name)
}

// key reads a dotted key: bare or quoted parts joined by dots.
func (s *lineScanner) key() ([]string, bool) {
	var path []string
	for {
		s.blank(false)
		var part string
		switch c := s.peek(0); {
		case c == '"' || c == '\'':
			start := s.i
			s.str()
			p := s.s[start:s.i]
			if c == '"' {
				u, err := strconv.Unquote(p)
				if err != nil {
					return nil, false
				}
				p = u
			} else {
				p = strings.Trim(p, "'")
			}
			part = p
		default:
			start := s.i
			for s.i < len(s.s) && isBare(s.s[s.i]) {
				s.i++
			}
			if s.i == start {
				return nil, false
			}
			part = s.s[start:s.i]
		}
		path = append(path, part)
		s.blank(false)
		if s.peek(0) != '.' {
			return path, true
		}
		s.i++
	}
}

func isBare(c byte) bool {
	return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '_' || c == '-'
}

// str skips a basic, literal or multi-line string.
func (s *lineScanner) str() {
	q := s.s[s.i]
	if strings.HasPrefix(s.s[s.i:], strings.Repeat(string(q), 3)) {
		s.i += 3
		for s.i < len(s.s) {
			if q == '"' && s.s[s.i] == '\\' && s.i+1 < len(s.s) {
				s.i++
				s.next()
				continue
			}
			if strings.HasPrefix(s.s[s.i:], strings.Repeat(string(q), 3)) {
				s.i += 3
				for s.i < len(s.s) && s.s[s.i] == q { // up to two quotes may end the content
					s.i++
				}
				return
			}
			s.next()
		}
		return
	}
	s.i++
	for s.i < len(s.s) && s.s[s.i] != '\n' {
		c := s.s[s.i]
		s.i++
		if q == '"' && c == '\\' && s.i < len(s.s) && s.s[s.i] != '\n' {
			s.i++
		} else if c == q {
			return
		}
	}
}

// value skips a value; the keys of an inline table are added under name.
func (s *lineScanner) value(name string) {
	switch c := s.peek(0); c {
	case '"', '\'':
		s.str()
	case '{':
		s.i++
		for s.i < len(s.s) {
			s.blank(false)
			switch s.peek(0) {
			case '}':
				s.i++
				return
			case ',':
				s.i++
				continue
			case '\n', 0:
				return
			}
			start := s.i
			s.keyValue(name)
			if s.i == start {
				return
			}
		}
	case '[':
		s.i++
		for s.i < len(s.s) {
			s.blank(true)
			switch s.peek(0) {
			case ']':
				s.i++
				return
			case ',':
				s.i++
				continue
			case 0:
				return
			}
			start := s.i
			s.quiet++
			s.value("")
			s.quiet--
			if s.i == start {
				return
			}
		}
	default:
		for s.i < len(s.s) && !strings.ContainsRune(",]}#\n", rune(s.s[s.i])) {
			s.i++
		}
	}
}
