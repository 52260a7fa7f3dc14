"""Race review: a ridden race against its plan, where the time went, the drag area on the day."""
