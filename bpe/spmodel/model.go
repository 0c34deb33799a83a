// Package spmodel reads SentencePiece model files: the serialized
// ModelProto that holds a model's pieces with their scores and types, the
// trainer settings that change encoding, and the normalizer settings with
// their precompiled character map.
package spmodel

import (
	"crypto/sha256"
	"errors"
	"fmt"
	"os"
	"strconv"

	"morsel/bpe/charsmap"
)

// Type is a piece's type, as ModelProto.SentencePiece.Type numbers it.
type Type int8

// The piece types.
const (
	Normal      Type = 1 // an ordinary piece, made by merging
	Unknown     Type = 2 // the piece for text the model cannot spell
	Control     Type = 3 // a control piece such as <s>, never made from text
	UserDefined Type = 4 // a piece matched in the text before anything else
	Unused      Type = 5 // a piece that encoding splits back into its parts
	Byte        Type = 6 // <0xNN>, one byte, for byte fallback
)

var typeNames = [...]string{Normal: "normal", Unknown: "unknown", Control: "control", UserDefined: "user-defined", Unused: "unused", Byte: "byte"}

// String returns the type's name.
func (t Type) String() string {
	if t >= Normal && int(t) < len(typeNames) {
		return typeNames[t]
	}
	return "type " + strconv.Itoa(int(t))
}

// Kind is the model's algorithm, TrainerSpec.model_type.
type Kind int8

// The model kinds.
const (
	Unigram Kind = 1
	BPE     Kind = 2
	Word    Kind = 3
	Char    Kind = 4
)

var kindNames = [...]string{Unigram: "Unigram", BPE: "BPE", Word: "word", Char: "char"}

// String returns the kind's name.
func (k Kind) String() string {
	if k >= Unigram && int(k) < len(kindNames) {
		return kindNames[k]
	}
	return "model type " + strconv.Itoa(int(k))
}

// Piece is one entry of the vocabulary; its id is its index.
type Piece struct {
	Text  string
	Score float32
	Type  Type
}

// Normalizer is the model's NormalizerSpec.
type Normalizer struct {
	Name string        // the rule set's name, such as nmt_nfkc or identity
	Map  *charsmap.Map // the precompiled rules; empty for identity
	// AddDummyPrefix puts a white-space mark before the text (after it
	// when white space is a suffix).
	AddDummyPrefix bool
	// RemoveExtraWhitespaces drops leading and trailing white space and
	// keeps one of each run.
	RemoveExtraWhitespaces bool
	// EscapeWhitespaces writes each space as "▁" (U+2581).
	EscapeWhitespaces bool
}

// Model is a SentencePiece BPE model as the file describes it.
type Model struct {
	Pieces     []Piece
	Normalizer Normalizer
	// ByteFallback spells a character with no piece as its UTF-8 bytes'
	// <0xNN> pieces instead of the unknown piece.
	ByteFallback bool
	// TreatWhitespaceAsSuffix puts the white-space mark at the end of
	// pieces instead of the start.
	TreatWhitespaceAsSuffix bool
	SplitDigits             bool   // a training setting, kept for descriptions
	UnknownID               int    // the id of the unknown piece
	UnknownSurface          string // what the unknown piece decodes to
	StartPiece, EndPiece    string // the trainer's names for the start and end pieces (<s>, </s>)
	Fingerprint             string // "sha256:" and the file's hash
}

// trainer and normalizer spec field numbers (sentencepiece_model.proto).
const (
	fieldPieces     = 1
	fieldTrainer    = 2
	fieldNormalizer = 3

	pieceText  = 1
	pieceScore = 2
	pieceType  = 3

	trainerModelType     = 3
	trainerSuffix        = 24
	trainerSplitDigits   = 25
	trainerByteFallback  = 35
	trainerUnknownSurf   = 44
	trainerBosPiece      = 46
	trainerEosPiece      = 47
	normName             = 1
	normCharsmap         = 2
	normAddDummyPrefix   = 3
	normRemoveWhitespace = 4
	normEscapeWhitespace = 5
)

// ErrFormat is wrapped by every error Parse and Load return for a file
// that is not a usable SentencePiece BPE model.
var ErrFormat = errors.New("not a usable SentencePiece BPE model")

// Load reads and parses the model file at path.
func Load(path string) (*Model, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("reading SentencePiece model: %w", err)
	}
	return Parse(path, data)
}

// Parse decodes a serialized ModelProto; name is the file it came from,
// for errors. It fails, with an error that names the file and wraps
// ErrFormat, on bytes that are not protobuf or are cut short, a model that
// is not BPE, no pieces, a piece the model cannot use (empty, repeated,
// of an unknown type, a byte piece without byte fallback), a missing
// unknown piece or byte piece, and a corrupt character map.
func Parse(name string, data []byte) (*Model, error) {
	m, err := parse(data)
	if err != nil {
		return nil, fmt.Errorf("%s: %w: %w", name, ErrFormat, err)
	}
	sum := sha256.Sum256(data)
	m.Fingerprint = fmt.Sprintf("sha256:%x", sum)
	return m, nil
}

func parse(data []byte) (*Model, error) {
	m := &Model{
		Normalizer:     Normalizer{AddDummyPrefix: true, RemoveExtraWhitespaces: true, EscapeWhitespaces: true},
		UnknownSurface: " \u2047 ",
		StartPiece:     "<s>",
		EndPiece:       "</s>",
	}
	kind := Unigram // the proto's default
	var charsmapBlob []byte
	r := &reader{b: data}
	for {
		f, ok, err := r.next()
		if err != nil {
			return nil, err
		}
		if !ok {
			break
		}
		switch f.num {
		case fieldPieces:
			if err := f.want(wireBytes, "ModelProto", "pieces"); err != nil {
				return nil, err
			}
			p, err := parsePiece(f, len(m.Pieces))
			if err != nil {
				return nil, err
			}
			m.Pieces = append(m.Pieces, p)
		case fieldTrainer:
			if err := f.want(wireBytes, "ModelProto", "trainer_spec"); err != nil {
				return nil, err
			}
			if err := m.parseTrainer(f.sub(), &kind); err != nil {
				return nil, err
			}
		case fieldNormalizer:
			if err := f.want(wireBytes, "ModelProto", "normalizer_spec"); err != nil {
				return nil, err
			}
			blob, err := m.parseNormalizer(f.sub())
			if err != nil {
				return nil, err
			}
			charsmapBlob = blob
		}
	}
	if kind != BPE {
		return nil, fmt.Errorf("it is a %v model; only BPE models are read", kind)
	}
	if len(m.Pieces) == 0 {
		return nil, errors.New("it holds no pieces")
	}
	cm, err := charsmap.Parse(charsmapBlob)
	if err != nil {
		return nil, fmt.Errorf("normalizer %q: %w", m.Normalizer.Name, err)
	}
	m.Normalizer.Map = cm
	return m, m.checkPieces()
}

func parsePiece(f field, id int) (Piece, error) {
	p := Piece{Type: Normal}
	r := f.sub()
	for {
		g, ok, err := r.next()
		if err != nil {
			return p, fmt.Errorf("piece %d: %w", id, err)
		}
		if !ok {
			return p, nil
		}
		switch g.num {
		case pieceText:
			if err := g.want(wireBytes, "SentencePiece", "piece"); err != nil {
				return p, fmt.Errorf("piece %d: %w", id, err)
			}
			p.Text = string(g.bytes)
		case pieceScore:
			if err := g.want(wireFixed32, "SentencePiece", "score"); err != nil {
				return p, fmt.Errorf("piece %d: %w", id, err)
			}
			p.Score = g.float32()
		case pieceType:
			if err := g.want(wireVarint, "SentencePiece", "type"); err != nil {
				return p, fmt.Errorf("piece %d: %w", id, err)
			}
			p.Type = Type(g.int32())
			if g.u > uint64(Byte) || g.u < uint64(Normal) {
				return p, fmt.Errorf("piece %d %q has unknown type %d", id, p.Text, int32(g.u))
			}
		}
	}
}

func (m *Model) parseTrainer(r *reader, kind *Kind) error {
	for {
		f, ok, err := r.next()
		if err != nil {
			return fmt.Errorf("trainer_spec: %w", err)
		}
		if !ok {
			return nil
		}
		var werr error
		switch f.num {
		case trainerModelType:
			if werr = f.want(wireVarint, "TrainerSpec", "model_type"); werr == nil {
				*kind = Kind(f.int32())
				if f.u < uint64(Unigram) || f.u > uint64(Char) {
					return fmt.Errorf("trainer_spec names model type %d, which SentencePiece does not define", int32(f.u))
				}
			}
		case trainerSuffix:
			werr = f.want(wireVarint, "TrainerSpec", "treat_whitespace_as_suffix")
			m.TreatWhitespaceAsSuffix = f.u != 0
		case trainerSplitDigits:
			werr = f.want(wireVarint, "TrainerSpec", "split_digits")
			m.SplitDigits = f.u != 0
		case trainerByteFallback:
			werr = f.want(wireVarint, "TrainerSpec", "byte_fallback")
			m.ByteFallback = f.u != 0
		case trainerUnknownSurf:
			werr = f.want(wireBytes, "TrainerSpec", "unk_surface")
			m.UnknownSurface = string(f.bytes)
		case trainerBosPiece:
			werr = f.want(wireBytes, "TrainerSpec", "bos_piece")
			m.StartPiece = string(f.bytes)
		case trainerEosPiece:
			werr = f.want(wireBytes, "TrainerSpec", "eos_piece")
			m.EndPiece = string(f.bytes)
		}
		if werr != nil {
			return werr
		}
	}
}

func (m *Model) parseNormalizer(r *reader) (blob []byte, err error) {
	n := &m.Normalizer
	for {
		f, ok, err := r.next()
		if err != nil {
			return nil, fmt.Errorf("normalizer_spec: %w", err)
		}
		if !ok {
			return blob, nil
		}
		var werr error
		switch f.num {
		case normName:
			werr = f.want(wireBytes, "NormalizerSpec", "name")
			n.Name = string(f.bytes)
		case normCharsmap:
			werr = f.want(wireBytes, "NormalizerSpec", "precompiled_charsmap")
			blob = f.bytes
		case normAddDummyPrefix:
			werr = f.want(wireVarint, "NormalizerSpec", "add_dummy_prefix")
			n.AddDummyPrefix = f.u != 0
		case normRemoveWhitespace:
			werr = f.want(wireVarint, "NormalizerSpec", "remove_extra_whitespaces")
			n.RemoveExtraWhitespaces = f.u != 0
		case normEscapeWhitespace:
			werr = f.want(wireVarint, "NormalizerSpec", "escape_whitespaces")
			n.EscapeWhitespaces = f.u != 0
		}
		if werr != nil {
			return nil, werr
		}
	}
}

// checkPieces applies the reference's rules for a usable vocabulary: no
// empty or repeated piece within the pieces that merging uses (normal,
// user-defined, unused) or within the rest, one unknown piece, byte pieces
// only with byte fallback and then all 256 of them.
func (m *Model) checkPieces() error {
	merged := make(map[string]int, len(m.Pieces))
	reserved := map[string]int{}
	var bytesSeen [256]bool
	m.UnknownID = -1
	for id, p := range m.Pieces {
		if p.Text == "" {
			return fmt.Errorf("piece %d is empty", id)
		}
		set := reserved
		if p.Type == Normal || p.Type == UserDefined || p.Type == Unused {
			set = merged
		}
		if other, dup := set[p.Text]; dup {
			return fmt.Errorf("piece %d %q repeats piece %d", id, p.Text, other)
		}
		set[p.Text] = id
		switch p.Type {
		case Unknown:
			if m.UnknownID >= 0 {
				return fmt.Errorf("pieces %d and %d are both the unknown piece", m.UnknownID, id)
			}
			m.UnknownID = id
		case Byte:
			if !m.ByteFallback {
				return fmt.Errorf("piece %d %q is a byte piece, but byte fallback is off", id, p.Text)
			}
			b, ok := ByteOf(p.Text)
			if !ok {
				return fmt.Errorf("piece %d %q is a byte piece not of the form <0xNN>", id, p.Text)
			}
			bytesSeen[b] = true
		}
	}
	if m.UnknownID < 0 {
		return errors.New("no piece is the unknown piece")
	}
	if m.ByteFallback {
		for b, ok := range bytesSeen {
			if !ok {
				return fmt.Errorf("byte fallback is on but no piece is <0x%02X>", b)
			}
		}
	}
	return nil
}

// ByteOf returns the byte a byte piece "<0xNN>" stands for.
func ByteOf(piece string) (byte, bool) {
	if len(piece) != 6 || piece[:3] != "<0x" || piece[5] != '>' {
		return 0, false
	}
	var v byte
	for _, c := range []byte(piece[3:5]) {
		switch {
		case '0' <= c && c <= '9':
			v = v<<4 | (c - '0')
		case 'A' <= c && c <= 'F': // upper case only, as the reference writes them
			v = v<<4 | (c - 'A' + 10)
		default:
			return 0, false
		}
	}
	return v, true
}

// Start returns the id of the start piece when the model has one: the
// trainer's start piece (<s> by default) when it is a control piece.
func (m *Model) Start() (id int, ok bool) {
	for id, p := range m.Pieces {
		if p.Text == m.StartPiece && p.Type == Control {
			return id, true
		}
	}
	return -1, false
}
