"""speccheck.demo"""
