"""File formats at the edge of the package: GPX courses (gpx.py), exports, test rides.

These modules may use gpxpy, defusedxml, pandas and the like; the numeric core never imports
them. Each reader turns a bad file into pacing.errors.InputError with a one-line message.
"""
