"""speccheck.evaluation"""
