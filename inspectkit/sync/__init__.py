"""Records that travel: bundles between databases, instrument CSV import, exports."""
