"""The local web page: a starlette application over one read-only index (`treequery serve`).

`app.py` routes the page and the JSON API, `work.py` does what each endpoint asks
through the Python API, `tabs.py` keeps one running search per browser tab, and
`static/` holds the page itself (plain HTML, CSS and JavaScript, no build step).
The endpoints are documented in `API.md`.
"""
