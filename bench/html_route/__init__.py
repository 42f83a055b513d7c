"""The comparison route for the batch benchmark: the same report content as HTML + WeasyPrint.

Used only by ``bench/bench_batch.py`` to measure what the plain HTML-to-PDF stack would cost
for the same content (same view model, same wording templates, the same charts as SVG).  It is
not part of the product.
"""
