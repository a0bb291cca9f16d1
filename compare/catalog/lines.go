package catalog

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
)

// maxLineBytes bounds one line of text. A longer "line" almost always means
// the file is not a text table (or has no line breaks), and holding it
// would defeat streaming.
const maxLineBytes = 1 << 20

// lineReader returns lines one at a time, counting them from 1 and
// stripping "\n" or "\r\n". A returned slice is valid until the next call.
type lineReader struct {
	br   *bufio.Reader
	line int
	long []byte
}

var errLineTooLong = errors.New("line too long")

func (lr *lineReader) next() ([]byte, error) {
	lr.long = lr.long[:0]
	for {
		b, err := lr.br.ReadSlice('\n')
		if err == bufio.ErrBufferFull {
			lr.long = append(lr.long, b...)
			if len(lr.long) > maxLineBytes {
				return nil, errLineTooLong
			}
			continue
		}
		if len(lr.long) > 0 {
			lr.long = append(lr.long, b...)
			b = lr.long
			if len(b) > maxLineBytes+2 { // allow for "\r\n"
				return nil, errLineTooLong
			}
		}
		if err != nil && err != io.EOF {
			return nil, err
		}
		if err == io.EOF && len(b) == 0 {
			return nil, io.EOF
		}
		lr.line++
		b = bytes.TrimSuffix(b, []byte("\n"))
		b = bytes.TrimSuffix(b, []byte("\r"))
		if lr.line == 1 {
			b = bytes.TrimPrefix(b, []byte("\xef\xbb\xbf")) // UTF-8 byte-order mark
		}
		return b, nil
	}
}

// isBlank reports whether a line holds only spaces and tabs.
func isBlank(b []byte) bool {
	return len(bytes.Trim(b, " \t")) == 0
}

// isComment reports whether a line is a comment: its first non-blank
// character is '#'.
func isComment(b []byte) bool {
	b = bytes.TrimLeft(b, " \t")
	return len(b) > 0 && b[0] == '#'
}

// splitter splits a line into fields. The delimiter is ',' or ' '. With
// ',' each comma ends a field and spaces around a field are trimmed; with
// ' ' any run of spaces or tabs separates fields (the ECSV default). A
// field may be enclosed in double quotes, inside which the delimiter is
// literal and "" stands for one quote; a quoted field may not span lines.
type splitter struct {
	delim  byte
	fields [][]byte
	unq    []byte // unescaped quoted fields; sized so it never reallocates
}

type splitError struct {
	col int
	msg string
}

func (e *splitError) Error() string { return e.msg }

func (sp *splitter) split(line []byte) ([][]byte, error) {
	sp.fields = sp.fields[:0]
	if cap(sp.unq) < len(line) {
		sp.unq = make([]byte, 0, 2*len(line))
	}
	sp.unq = sp.unq[:0]
	n := len(line)
	i := 0
	skipBlank := func() {
		for i < n && (line[i] == ' ' || line[i] == '\t') {
			i++
		}
	}
	if sp.delim == ' ' {
		skipBlank()
		if i == n {
			return sp.fields, nil
		}
	}
	for {
		if sp.delim == ',' {
			skipBlank()
		}
		if i < n && line[i] == '"' {
			start := len(sp.unq)
			i++
			for {
				j := bytes.IndexByte(line[i:], '"')
				if j < 0 {
					return nil, &splitError{len(sp.fields) + 1, fmt.Sprintf("field %d opens a double quote that is never closed (a quoted field must end on the same line)", len(sp.fields)+1)}
				}
				sp.unq = append(sp.unq, line[i:i+j]...)
				i += j + 1
				if i < n && line[i] == '"' {
					sp.unq = append(sp.unq, '"')
					i++
					continue
				}
				break
			}
			sp.fields = append(sp.fields, sp.unq[start:len(sp.unq):len(sp.unq)])
			skipBlank()
			if i == n {
				return sp.fields, nil
			}
			if sp.delim == ',' {
				if line[i] != ',' {
					return nil, &splitError{len(sp.fields), fmt.Sprintf("field %d has text after its closing quote", len(sp.fields))}
				}
				i++
			}
			continue
		}
		if sp.delim == ',' {
			j := bytes.IndexByte(line[i:], ',')
			if j < 0 {
				sp.fields = append(sp.fields, bytes.TrimRight(line[i:], " \t"))
				return sp.fields, nil
			}
			sp.fields = append(sp.fields, bytes.TrimRight(line[i:i+j], " \t"))
			i += j + 1
			continue
		}
		start := i
		for i < n && line[i] != ' ' && line[i] != '\t' {
			i++
		}
		sp.fields = append(sp.fields, line[start:i])
		skipBlank()
		if i == n {
			return sp.fields, nil
		}
	}
}
