"""The loadcore planner app (Streamlit). Pages live in app/pages/; app/main.py is the entry."""
