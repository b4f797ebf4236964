package analysis

import (
	"crypto/hmac"
	"crypto/sha256"
	"encoding/hex"
	"strconv"

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
		p.Message = p.Code.Meaning()
		c.Problems[i] = p
	}
	c.Settings.Pseudonymised = true
	return &c
}
