"""Results: the exact re-evaluation of the front, design records, the results folder and the HTML
report."""
