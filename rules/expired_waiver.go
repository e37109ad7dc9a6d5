package rules

// ExpiredWaiver is raised for a waiver whose date has passed: the debt it accepted was
// meant to be paid by then.
var ExpiredWaiver = Rule{
	ID:      "expired-waiver",
	Default: Warning,
	Title:   "A waiver in the manifest has expired",
	Why: "A waiver accepts a finding until a date, so that known debt does not fail every " +
		"build while it is being paid. After that date (the expires day itself still counts) " +
		"the waiver stops working: the findings it accepted count toward the exit code again, " +
		"and this warning points at the waiver.",
	Fix: "Fix what the waived rule reports and delete the waiver, or renew it with a later " +
		"expires: date and a reason that still holds; the change is reviewed like code.",
	How: "The waiver's expires date against --today (default: the current date, UTC); the expires day itself still counts.",
	Bad: `    waivers:
      - {rule: scan-overhead, reason: "bigger segments after the upgrade", expires: 2025-12-31}`,
	Good: `    waivers:
      - {rule: scan-overhead, reason: "upgrade moved to the second quarter", expires: 2026-06-30}`,
}

func init() { register(ExpiredWaiver) }
