package linelist

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"io"
	"unicode/utf8"

	"golang.org/x/text/encoding/charmap"
	"golang.org/x/text/transform"
)

// Encoding names reported in LineList.Encoding.
const (
	EncUTF8        = "utf-8"
	EncUTF8BOM     = "utf-8-bom" // UTF-8 with a byte-order mark, which is stripped
	EncLatin1      = "latin-1"
	EncWindows1252 = "windows-1252"
)

var _ io.Reader = (*textDecoder)(nil)

// textDecoder turns the export's bytes into UTF-8.
//
// In auto mode the decision is made at the first non-ASCII byte, wherever in the file it
// is: if it starts a valid UTF-8 sequence the file is read as UTF-8, otherwise as
// Windows-1252 (a superset of Latin-1's printable characters) from that byte on. Every
// byte before it was ASCII, which all three encodings spell the same way, so the decision
// is exact without a second pass and without guessing from a prefix. Once a file is read
// as UTF-8, a later invalid sequence is corruption rather than another encoding; the
// reader reports the cells it lands in (see Read).
type textDecoder struct {
	src   *bufio.Reader
	enc   string // "" while undecided (only ASCII seen), else one of the Enc names
	bom   bool
	trans io.Reader // the charmap decoder once enc is single-byte
}

func newTextDecoder(src *bufio.Reader, encoding string, bom bool) *textDecoder {
	d := &textDecoder{src: src, bom: bom}
	switch {
	case bom:
		d.enc = EncUTF8BOM
	case encoding == "utf-8":
		d.enc = EncUTF8
	case encoding == "latin-1":
		d.setSingleByte(EncLatin1)
	case encoding == "windows-1252":
		d.setSingleByte(EncWindows1252)
	}
	return d
}

func (d *textDecoder) setSingleByte(enc string) {
	d.enc = enc
	cm := charmap.Windows1252
	if enc == EncLatin1 {
		cm = charmap.ISO8859_1
	}
	d.trans = transform.NewReader(d.src, cm.NewDecoder())
}

// encoding reports the decision; a file that was ASCII throughout is UTF-8.
func (d *textDecoder) encoding() string {
	if d.enc == "" {
		return EncUTF8
	}
	return d.enc
}

func (d *textDecoder) Read(p []byte) (int, error) {
	switch {
	case d.trans != nil:
		return d.trans.Read(p)
	case d.enc != "":
		return d.src.Read(p)
	}
	if len(p) == 0 {
		return 0, nil
	}
	if d.src.Buffered() == 0 {
		if _, err := d.src.Peek(1); err != nil {
			return 0, err
		}
	}
	buf, _ := d.src.Peek(min(d.src.Buffered(), len(p)))
	i := asciiPrefix(buf)
	if i > 0 {
		n := copy(p, buf[:i])
		_, _ = d.src.Discard(n)
		return n, nil
	}
	// buf[0] is the file's first non-ASCII byte: decide here.
	q, _ := d.src.Peek(utf8.UTFMax) // fewer bytes only at the end of the input
	if r, size := utf8.DecodeRune(q); r == utf8.RuneError && size <= 1 {
		d.setSingleByte(EncWindows1252)
	} else {
		d.enc = EncUTF8
	}
	return d.Read(p)
}

// asciiPrefix returns the length of the longest prefix of b that is ASCII, testing eight
// bytes at a time (a byte is ASCII when its top bit is clear).
func asciiPrefix(b []byte) int {
	i := 0
	for ; i+8 <= len(b); i += 8 {
		if binary.LittleEndian.Uint64(b[i:])&0x8080808080808080 != 0 {
			break
		}
	}
	for i < len(b) && b[i] < utf8.RuneSelf {
		i++
	}
	return i
}

// sniffDelimiter counts ',', ';' and tabs outside double quotes on the header line (as far
// as the prefix holds it) and picks the most frequent; ties go to ',' then ';' then tab,
// and a line with none of them is read as comma-separated (a one-column file).
func sniffDelimiter(prefix []byte) rune {
	var comma, semi, tab int
	inQuote := false
	for _, c := range prefix {
		switch {
		case c == '"':
			inQuote = !inQuote
		case inQuote:
		case c == '\n':
			goto done
		case c == ',':
			comma++
		case c == ';':
			semi++
		case c == '\t':
			tab++
		}
	}
done:
	switch {
	case semi > comma && semi >= tab:
		return ';'
	case tab > comma && tab > semi:
		return '\t'
	}
	return ','
}

// looksBinary reports whether the prefix is not text: a NUL byte on the header line, or
// more than one byte in ten being a control character other than tab, CR, LF and FF.
func looksBinary(prefix []byte) bool {
	header := prefix
	if i := bytes.IndexByte(prefix, '\n'); i >= 0 {
		header = prefix[:i]
	}
	if bytes.IndexByte(header, 0) >= 0 {
		return true
	}
	ctl := 0
	for _, c := range prefix {
		if (c < 0x20 && c != '\t' && c != '\n' && c != '\r' && c != '\f') || c == 0x7f {
			ctl++
		}
	}
	return ctl*10 > len(prefix)
}
