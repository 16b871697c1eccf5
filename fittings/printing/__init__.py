"""Printed documents for a plan revision, drawn by WeasyPrint from templates/fittings/print/.

Every document is drawn from the revision's stored inputs and result only,
never recomputed another way, so printing an issued revision again gives the
same pages.

- ``data``: the revision read once into plain data, and what every document shows;
- ``engine``: WeasyPrint (fixed font dates, data: addresses only) and the fork;
- ``work_order``, ``cutting_sheet``: one renderer each, ``(data, paper, pattern) -> bytes``
  (the cutting sheet's drawing is patterns/core/sheets.py);
- ``registry``: the documents a print job can draw, by slug.
"""
