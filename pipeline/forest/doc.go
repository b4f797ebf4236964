// Package forest turns the infector links of a line list into a transmission forest: a
// directed forest whose trees are clusters (transmission chains) rooted at index, imported
// or unlinked cases.
//
// Real data break the forest — links to unknown identifiers, self-links, cycles — and none
// of these may crash a run or vanish silently: Build repairs what it must (drops the link)
// and records each repair as a linelist.Problem with the case's line number. Everything
// runs in linear time with explicit stacks and queues, so a chain 1,000,000 cases deep is as
// safe as a short one.
package forest
