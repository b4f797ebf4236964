package analysis

import (
	"crypto/hmac"
	"crypto/sha256"
	"encoding/hex"
	"strconv"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

// Pseudonymised returns a copy of s in which every case identifier is replaced: with a key,
// by a keyed hash (HMAC-SHA-256, first 10 hex digits: stable across runs and reports that
// share the key, and not reversible without it); without one, by an ordinal in order of
// first appearance. Problem messages, which quote identifiers, are replaced by the code's
// plain description; their line numbers stay, so the analyst can still find each row.
// The key itself appears nowhere in the result.
func (s *Summary) Pseudonymised(key string) *Summary {
	c := *s
	seen := map[string]string{}
	alias := func(id string) string {
		if p, ok := seen[id]; ok {
			return p
		}
		var p string
		if key != "" {
			m := hmac.New(sha256.New, []byte(key))
			m.Write([]byte(id))
			p = "case-" + hex.EncodeToString(m.Sum(nil))[:10]
		} else {
			p = "case-" + strconv.Itoa(len(seen)+1)
		}
		seen[id] = p
		return p
	}
	if s.Offspring != nil {
		o := *s.Offspring
		o.Superspreaders = make([]string, len(s.Offspring.Superspreaders))
		for i, id := range s.Offspring.Superspreaders {
			o.Superspreaders[i] = alias(id)
		}
		c.Offspring = &o
	}
	if s.Clusters != nil {
		cl := *s.Clusters
		cl.Largest = make([]TreeView, len(s.Clusters.Largest))
		for i, tv := range s.Clusters.Largest {
			tv.Root = alias(tv.Root)
			nodes := make([]TreeNode, len(tv.Nodes))
			for j, n := range tv.Nodes {
				n.ID = alias(n.ID)
				nodes[j] = n
			}
			tv.Nodes = nodes
			cl.Largest[i] = tv
		}
		c.Clusters = &cl
	}
	c.Problems = make([]Problem, len(s.Problems))
	for i, p := range s.Problems {
		p.Message = ProblemMeaning(p.Code)
		c.Problems[i] = p
	}
	c.Settings.Pseudonymised = true
	return &c
}

// ProblemMeaning says in plain words what a problem code means and what was done.
func ProblemMeaning(code linelist.Code) string {
	switch code {
	case linelist.CodeFieldCount:
		return "the row has a different number of fields from the header; the row was not used"
	case linelist.CodeMissingID:
		return "the case identifier is blank; the row was not used"
	case linelist.CodeDuplicateID:
		return "the case identifier appeared on an earlier row; this row was not used"
	case linelist.CodeBadDate:
		return "a date could not be read; an unreadable onset date means the row was not used"
	case linelist.CodeBadValue:
		return "a value could not be read; it was dropped and the case kept"
	case linelist.CodeUnknownInfector:
		return "the infector named matches no case; the link was dropped and the case kept as unlinked"
	case linelist.CodeSelfInfector:
		return "the case names itself as its infector; the link was dropped"
	case linelist.CodeCycle:
		return "the case lies on a cycle of infector links; the links on the cycle were dropped"
	case linelist.CodeOnsetBeforeInfector:
		return "the onset precedes the infector's onset; the link was kept (pre-symptomatic transmission can do this)"
	case linelist.CodeFutureOnset:
		return "the onset is after the analysis date; the case was kept"
	}
	return "a problem with this row"
}
