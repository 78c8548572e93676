"""procplan.ui"""
