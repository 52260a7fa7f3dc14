"""Setups side by side: finish times, break-even figures, sensitivities and uncertainty."""
