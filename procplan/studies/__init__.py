"""procplan.studies"""
