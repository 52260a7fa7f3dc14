"""The course: GPX geometry turned into arrays along distance, elevation cleaning, segments."""
