"""The planning desk in the browser (``phaseplan serve``): a front end of :mod:`planner.service`.

Server-rendered pages (Starlette, Jinja2 with autoescaping) for trips and rosters, saved plans in SQLite
under the data folder, planning in worker threads, and a JSON API. The modules: :mod:`~planner.web.app`
(routes), :mod:`~planner.web.forms` (the trip form and the scenario it makes), :mod:`~planner.web.jobs`
(planning in workers), :mod:`~planner.web.store` (saved plans, schema migrations) and
:mod:`~planner.web.security` (access token, form tokens, upload limit). No science here.
"""
