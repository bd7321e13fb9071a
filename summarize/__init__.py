"""boildown's main job: condense a document to a strict word budget.

Heavy libraries load only when a summary is first made.
"""
