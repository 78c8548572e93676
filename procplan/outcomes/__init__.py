"""procplan.outcomes"""
