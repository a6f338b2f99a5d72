// Severities in order of urgency, so lists sort by how bad a finding is rather than by its name
// (as text, "warning" > "info" > "critical").
export const SEVERITIES = ['info', 'warning', 'critical'] as const;
export type Severity = (typeof SEVERITIES)[number];

/** Higher is more urgent: info 0, warning 1, critical 2. */
export const SEVERITY_RANK: Record<Severity, number> = { info: 0, warning: 1, critical: 2 };
