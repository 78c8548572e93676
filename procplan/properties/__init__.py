"""procplan.properties"""
