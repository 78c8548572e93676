"""Every file format procplan reads and writes (TOML plans, products, machines, rules, site, library folder),
converted to SI at this edge."""
