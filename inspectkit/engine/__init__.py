"""Pure computation: rules, schedule, trend and earthing formulas; no SQL, files or clock."""
