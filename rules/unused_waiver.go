package rules

// UnusedWaiver is raised for a live waiver that accepts no finding.
var UnusedWaiver = Rule{
	ID:      "unused-waiver",
	Default: Note,
	Title:   "A waiver in the manifest matches no finding",
	Why: "A waiver that matches nothing is dead weight, and worse, it would silently accept " +
		"the next finding of its rule on that table. It usually means the problem was fixed.",
	Fix: "Delete the waiver.",
	How: "A live waiver for a rule that raised nothing on its table.",
	Bad: `    waivers:
      - {rule: truncated-segments, reason: "regions load separately", expires: 2026-06-30}   # nothing truncated any more`,
	Good: `    # the waiver is gone`,
}

func init() { register(UnusedWaiver) }
