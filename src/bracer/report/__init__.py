"""Report writers: one module per output format, each rendering the same typed results.

Writers read results (findings and the rows of each check); checks never import writers.

* :mod:`bracer.report.review_terminal` -- the pre-trial review in the terminal (rich);
* :mod:`bracer.report.review_json` -- the pre-trial review as a JSON record.
"""
