package linelist

import (
	"encoding/csv"
	"errors"
	"io"
	"sync"
)

// batchSize is the number of records a splitting batch carries, and presizeAt the row after
// which the reader estimates the row count from the bytes consumed.
const (
	batchSize = 512
	presizeAt = 1024
)

// csvRecord is one record as encoding/csv split it: its fields (strings of their own, which
// encoding/csv allocates per record even with ReuseRecord) or the parse error that
// replaced it, and the lines of its first and last field.
type csvRecord struct {
	fields     []string
	line, last int
	pe         *csv.ParseError
}

// csvBatch is a run of consecutive records. enc is the decoder's encoding decision once
// they were read, offset the input offset after record presizeAt when the batch holds it,
// and err a read error that ends the stream.
type csvBatch struct {
	recs   []csvRecord
	flat   []string
	enc    string
	offset int64
	err    error
}

var batchPool = sync.Pool{New: func() any {
	return &csvBatch{recs: make([]csvRecord, 0, batchSize)}
}}

// recycle returns a consumed batch to the pool.
func recycle(b *csvBatch) {
	clear(b.flat)
	b.recs, b.flat, b.err, b.offset = b.recs[:0], b.flat[:0], nil, 0
	batchPool.Put(b)
}

// splitRecords reads records from cr on a goroutine of its own and sends them in batches
// until end of input, a read error (sent as the last batch) or stop closing. The channel
// holds two batches, so splitting runs at most that far ahead.
func splitRecords(cr *csv.Reader, dec *textDecoder, stop <-chan struct{}) <-chan *csvBatch {
	out := make(chan *csvBatch, 2)
	go func() {
		defer close(out)
		send := func(b *csvBatch) bool {
			b.enc = dec.encoding()
			select {
			case out <- b:
				return true
			case <-stop:
				return false
			}
		}
		n := 0
		b := batchPool.Get().(*csvBatch)
		for {
			rec, err := cr.Read()
			if err == io.EOF {
				break
			}
			var pe *csv.ParseError
			if err != nil && !errors.As(err, &pe) {
				b.err = err
				break
			}
			n++
			r := csvRecord{pe: pe}
			if pe == nil {
				r.line, _ = cr.FieldPos(0)
				r.last, _ = cr.FieldPos(len(rec) - 1)
				start := len(b.flat)
				b.flat = append(b.flat, rec...)
				r.fields = b.flat[start:len(b.flat):len(b.flat)]
			}
			b.recs = append(b.recs, r)
			if n == presizeAt {
				b.offset = cr.InputOffset()
			}
			if len(b.recs) == batchSize {
				if !send(b) {
					return
				}
				b = batchPool.Get().(*csvBatch)
			}
		}
		if len(b.recs) > 0 || b.err != nil {
			send(b)
		}
	}()
	return out
}
