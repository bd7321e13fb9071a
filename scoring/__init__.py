"""Everything that judges a summary against its source; knows nothing of how it was made.

Heavy libraries (torch, transformers, spaCy) load only when a scorer first needs them.
"""
