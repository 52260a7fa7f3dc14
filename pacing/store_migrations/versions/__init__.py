"""One module per schema revision, oldest first: 0001_initial, 0002_plan_notes."""
