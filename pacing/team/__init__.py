"""Team time trials and team pursuits: the line of riders, drafting by position, turns."""
