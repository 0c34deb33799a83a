package spmodel

import (
	"encoding/binary"
	"errors"
	"fmt"
	"math"
)

// errWire is wrapped by every error of the wire-format reader.
var errWire = errors.New("not a valid protobuf message")

// wire types of the protobuf encoding.
const (
	wireVarint  = 0
	wireFixed64 = 1
	wireBytes   = 2
	wireFixed32 = 5
)

// reader walks the fields of one protobuf message. base is the message's
// offset in the file, for errors.
type reader struct {
	b    []byte
	pos  int
	base int
}

// field is one field of a message: its number and wire type, and its
// value as an integer (varint, fixed) or bytes (length-delimited).
type field struct {
	num   int
	wire  int
	at    int // the file offset of the field's key
	u     uint64
	bytes []byte
	base  int // the file offset of bytes
}

// next returns the next field; ok is false at the end of the message.
func (r *reader) next() (f field, ok bool, err error) {
	if r.pos >= len(r.b) {
		return field{}, false, nil
	}
	f.at = r.base + r.pos
	key, err := r.varint()
	if err != nil {
		return f, false, err
	}
	if key>>3 == 0 || key>>3 > math.MaxInt32 {
		return f, false, fmt.Errorf("%w: field number %d at byte %d", errWire, key>>3, f.at)
	}
	f.num, f.wire = int(key>>3), int(key&7)
	switch f.wire {
	case wireVarint:
		f.u, err = r.varint()
	case wireFixed64:
		if len(r.b)-r.pos < 8 {
			return f, false, fmt.Errorf("%w: field %d at byte %d is cut short (8 bytes wanted, %d left)", errWire, f.num, f.at, len(r.b)-r.pos)
		}
		f.u = binary.LittleEndian.Uint64(r.b[r.pos:])
		r.pos += 8
	case wireFixed32:
		if len(r.b)-r.pos < 4 {
			return f, false, fmt.Errorf("%w: field %d at byte %d is cut short (4 bytes wanted, %d left)", errWire, f.num, f.at, len(r.b)-r.pos)
		}
		f.u = uint64(binary.LittleEndian.Uint32(r.b[r.pos:]))
		r.pos += 4
	case wireBytes:
		var n uint64
		if n, err = r.varint(); err != nil {
			return f, false, err
		}
		if n > uint64(len(r.b)-r.pos) {
			return f, false, fmt.Errorf("%w: field %d at byte %d is cut short (%d bytes wanted, %d left)", errWire, f.num, f.at, n, len(r.b)-r.pos)
		}
		f.bytes, f.base = r.b[r.pos:r.pos+int(n)], r.base+r.pos
		r.pos += int(n)
	default:
		return f, false, fmt.Errorf("%w: field %d at byte %d has wire type %d", errWire, f.num, f.at, f.wire)
	}
	return f, err == nil, err
}

func (r *reader) varint() (uint64, error) {
	x, n := binary.Uvarint(r.b[r.pos:])
	if n <= 0 {
		if n == 0 {
			return 0, fmt.Errorf("%w: a number at byte %d is cut short", errWire, r.base+r.pos)
		}
		return 0, fmt.Errorf("%w: a number at byte %d overflows 64 bits", errWire, r.base+r.pos)
	}
	r.pos += n
	return x, nil
}

// sub returns a reader over a length-delimited field's message.
func (f field) sub() *reader { return &reader{b: f.bytes, base: f.base} }

// want checks that f has the wire type its field number needs.
func (f field) want(wire int, msg, name string) error {
	if f.wire != wire {
		return fmt.Errorf("%w: %s.%s (field %d) at byte %d has wire type %d, want %d", errWire, msg, name, f.num, f.at, f.wire, wire)
	}
	return nil
}

// int32 reads a varint field as protobuf's int32 (negative numbers are
// ten-byte varints).
func (f field) int32() int32 { return int32(f.u) }

func (f field) float32() float32 { return math.Float32frombits(uint32(f.u)) }
