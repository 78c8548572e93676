"""procplan.conduction"""
