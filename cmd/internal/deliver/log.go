package deliver

import (
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"strings"
	"time"
)

// LogFile is the name of the send log in a report folder.
const LogFile = "mail-log.json"

// Log is the send log kept in the report folder: one entry per message and recipient, the
// latest attempt only. A message is known by its ID (Message.ID, a digest of its content),
// so a retry skips the recipients that already have this very message, and next week's
// reports, which are new messages, go to everyone.
type Log struct {
	Entries []LogEntry `json:"entries"`
}

// LogEntry is the latest attempt to send one message to one recipient.
type LogEntry struct {
	Report    string `json:"report"` // the report's file name without .html
	MessageID string `json:"message_id"`
	Recipient string `json:"recipient"`
	Sent      bool   `json:"sent"`
	Error     string `json:"error,omitempty"`
	At        string `json:"at"` // time of the attempt, RFC 3339, UTC
}

// ReadLog reads the send log at path; a missing file is an empty log.
func ReadLog(path string) (*Log, error) {
	b, err := os.ReadFile(path)
	if errors.Is(err, fs.ErrNotExist) {
		return &Log{}, nil
	}
	if err != nil {
		return nil, err
	}
	var l Log
	if err := json.Unmarshal(b, &l); err != nil {
		return nil, fmt.Errorf("the send log %s is not readable (%v); move it away to send everything again", path, err)
	}
	return &l, nil
}

func (l *Log) find(id, rcpt string) int {
	for i, e := range l.Entries {
		if e.MessageID == id && strings.EqualFold(e.Recipient, rcpt) {
			return i
		}
	}
	return -1
}

// Sent reports whether the message with this ID was accepted for the recipient.
func (l *Log) Sent(id, rcpt string) bool {
	i := l.find(id, rcpt)
	return i >= 0 && l.Entries[i].Sent
}

// Record keeps the outcome of one attempt, replacing an earlier one for the same message
// and recipient.
func (l *Log) Record(report string, r Result, at time.Time) {
	e := LogEntry{Report: report, MessageID: r.Message.ID, Recipient: r.Recipient.Address, Sent: r.Err == nil, At: at.UTC().Format(time.RFC3339)}
	if r.Err != nil {
		e.Error = r.Err.Error()
	}
	if i := l.find(e.MessageID, e.Recipient); i >= 0 {
		l.Entries[i] = e
		return
	}
	l.Entries = append(l.Entries, e)
}

// JSON is the log as written to LogFile.
func (l *Log) JSON() ([]byte, error) {
	b, err := json.MarshalIndent(l, "", "  ")
	return append(b, '\n'), err
}
