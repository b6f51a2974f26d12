package layout

import "bytes"

// redrawer is a decoder that reads only the text after a line's last
// carriage return (console text: a progress bar redrawn in place, then the
// epoch's values). The Reader then keeps only that part of a line as it
// arrives, so a line redrawn for megabytes before its last carriage
// return is read, and only a part after it longer than maxLineBytes is
// skipped as too long.
type redrawer interface {
	lastSegment() bool
}

// feedRedrawn is Feed for a redrawer: lines end at newlines, and a
// carriage return drops what came before it on the line. An over-long
// part is reported when its line ends, since a carriage return may still
// come and make it irrelevant.
func (r *Reader) feedRedrawn(p []byte) {
	for len(p) > 0 && !r.bailed {
		part, ended := p, false
		if nl := bytes.IndexByte(p, '\n'); nl >= 0 {
			part, p, ended = p[:nl], p[nl+1:], true
		} else {
			p = nil
		}
		if j := lastCR(part); j >= 0 {
			r.carry, r.skipping, r.midLine = r.carry[:0], false, true
			part = part[j+1:]
		}
		if !ended {
			r.holdRedrawn(part)
			return
		}
		switch {
		case r.skipping || len(r.carry)+len(part) > maxLineBytes:
			if !r.skipping {
				r.noteLong(part)
			}
			r.tooLong(r.longHead)
			r.carry, r.skipping = r.carry[:0], false
			r.endLine(false)
		case len(r.carry) > 0:
			r.carry = append(r.carry, part...)
			r.line(r.carry)
			r.carry = r.carry[:0]
		default:
			r.line(part)
		}
	}
}

// holdRedrawn keeps the part of a line after its last carriage return so
// far, or, past maxLineBytes, only its first bytes for the example.
func (r *Reader) holdRedrawn(part []byte) {
	if r.skipping {
		return
	}
	if len(r.carry)+len(part) > maxLineBytes {
		r.noteLong(part)
		r.carry = r.carry[:0]
		r.skipping = true
		return
	}
	r.carry = append(r.carry, part...)
}

// noteLong keeps the first bytes of an over-long part (what is held, else
// part) for its example.
func (r *Reader) noteLong(part []byte) {
	head := r.carry
	if len(head) == 0 {
		head = part
	}
	r.longHead = append(r.longHead[:0], head[:min(len(head), exampleBytes)]...)
}

// lastCR is bytes.LastIndexByte(b, '\r'), looking first with IndexByte:
// most lines have no carriage return, and IndexByte looks at many bytes
// at a time where LastIndexByte looks at one (it cost console text 7 % of
// its reading).
func lastCR(b []byte) int {
	if bytes.IndexByte(b, '\r') < 0 {
		return -1
	}
	return bytes.LastIndexByte(b, '\r')
}
