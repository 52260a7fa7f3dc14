"""Streamlit front end (placeholder until the web-app issue lands)."""

import streamlit as st

st.set_page_config(page_title="pacing", layout="wide")
st.title("pacing")
st.write("Race-pacing planner for cycling and running.")
