package curvefile

import (
	"bytes"
	"fmt"
	"io"
)

// input reads blocks from r into buf and hands out whole lines.
type input struct {
	r        io.Reader
	buf      []byte
	pos, end int // buf[pos:end] is read and not yet used
	lim      int // buf[pos:lim] is whole lines, each with its line end
	eof      bool
	// left is how many bytes the input still holds where that is known
	// (a file's size from its status when it was opened, an in-memory
	// reader's length), else negative. Once they are read the input has
	// ended, without a read to find out: a file is read as it was when
	// opened.
	left int
}

// more makes at least one whole line available at pos, reading as needed;
// it returns false at the end of the input. At the end a last line
// without a line end gets one.
func (in *input) more() (bool, error) {
	for in.pos >= in.lim {
		if in.eof {
			return false, nil
		}
		if in.end-in.pos > MaxLine+1 {
			return false, fmt.Errorf("line longer than %d bytes (1 MiB)", MaxLine)
		}
		if in.pos > 0 {
			in.end = copy(in.buf, in.buf[in.pos:in.end])
			in.pos, in.lim = 0, 0
		}
		if len(in.buf)-in.end < blockSize/2 {
			in.buf = append(in.buf[:cap(in.buf)], make([]byte, len(in.buf))...)
		}
		n, err := in.r.Read(in.buf[in.end : len(in.buf)-1]) // room for a last line end
		in.end += n
		if in.left >= 0 {
			if in.left -= n; in.left <= 0 && err == nil {
				err = io.EOF
			}
		}
		switch {
		case err == io.EOF:
			in.eof = true
			if in.end > in.pos && in.buf[in.end-1] != '\n' {
				in.buf[in.end] = '\n'
				in.end++
			}
		case err != nil:
			return false, err
		}
		in.setLim()
	}
	return true, nil
}

// setLim finds the end of the last whole line in buf[pos:end]. A CR at the
// very end may be the first half of a CR LF, so before the end of the
// input it does not end a line yet.
func (in *input) setLim() {
	b := in.buf[in.pos:in.end]
	j := bytes.LastIndexByte(b, '\n')
	if k := bytes.LastIndexByte(b[j+1:], '\r'); k >= 0 {
		k += j + 1
		if k < len(b)-1 {
			j = k
		} else if k2 := bytes.LastIndexByte(b[j+1:k], '\r'); k2 >= 0 {
			j += 1 + k2
		}
	}
	in.lim = in.pos + j + 1
}
