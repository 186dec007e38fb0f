"""Presentation of results: calculation reports (HTML and PDF), the building view of a
batch, spreadsheet exports, beam schedules, the case-file template and its JSON Schema.

Nothing here computes engineering: everything is read from the result files
(:mod:`envelope.store`) or from the case reader.  The libraries used here (jinja2,
typst, xlsxwriter, python-calamine) are imported inside the functions that use them,
so that the engine and ``envelope --help`` never load them.

- :mod:`~envelope.report.collect`: one result folder as the data of a report;
- :mod:`~envelope.report.echo`: the input echoed with the unit of every key;
- :mod:`~envelope.report.checks`: every design check with its clause and result;
- :mod:`~envelope.report.sketch`: the model sketch (spans, supports, loads) as SVG;
- :mod:`~envelope.report.html` and :mod:`~envelope.report.pdf`: the two renderings;
- :mod:`~envelope.report.index`: OUT/_all/index.html and summary.pdf for a batch;
- :mod:`~envelope.report.export`: every table to xlsx or csv with units in the header;
- :mod:`~envelope.report.schedule`: a beam schedule (csv/xlsx) read into case files;
- :mod:`~envelope.report.template` and :mod:`~envelope.report.schema`: ``envelope new``
  and the JSON Schema of the case file;
- :mod:`~envelope.report.commands`: the click commands.
"""
