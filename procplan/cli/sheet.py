"""Sub-commands ``procplan sheet``, ``procplan new`` and ``procplan site`` (registered by :mod:`procplan.cli`).

- ``procplan sheet PLAN.toml -o sheet.pdf [--paper a4|letter] [--lot ID] [--revision R] [--site FILE]``
- ``procplan new product NAME --template LIBRARY_PRODUCT`` and
  ``procplan new plan NAME --product P --template PLAN``: a new TOML file from a template, written
  atomically, over an existing file only with ``--force``
- ``procplan site [--site FILE]``: the site settings

Bad arguments raise :class:`procplan.errors.InvalidInputError` naming the option, so ``procplan`` prints
the problem and exits with code 2.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

from procplan.caution import CAUTION_SHORT
from procplan.cli.common import (
    EXIT_OK,
    info_stream,
    load_library_of,
    load_plan_of,
    load_site_of,
    output_target,
    write_output,
)
from procplan.errors import InvalidInputError


def _text_option(field: str, value: str | None, max_len: int, *, required: bool = False) -> str:
    v = "" if value is None else value
    if (required and not v.strip()) or len(v) > max_len or any(ord(ch) < 32 for ch in v):
        raise InvalidInputError(
            field, value, f"{'non-empty ' if required else ''}text of at most {max_len} printable characters"
        )
    return v


def cmd_sheet(args) -> int:
    from procplan.files.site import PAPER_SIZES
    from procplan.output.sheet import batch_sheet_pdf
    from procplan.run.engine import run_plan

    lib = load_library_of(args)
    site = load_site_of(args, lib)
    paper = args.paper if args.paper is not None else site.paper
    if paper not in PAPER_SIZES:
        raise InvalidInputError("--paper", args.paper, "one of " + ", ".join(PAPER_SIZES))
    lot = _text_option("--lot", args.lot, 40)
    revision = _text_option("--revision", args.revision, 12, required=True)
    prepared = _text_option("--prepared-by", args.prepared_by, 60)
    out = output_target(
        "--output", args.output, force=args.force, inputs=[args.plan, args.site], suffix=".pdf"
    )
    plan = load_plan_of(args.plan, lib)
    result = run_plan(plan, library=lib, site=site)
    try:
        pdf = batch_sheet_pdf(
            result,
            site=site,
            lot_id=lot,
            revision=revision,
            paper=paper,
            prepared_by=prepared,
            date=args.date,
        )
    except InvalidInputError as exc:
        if exc.field == "date":
            raise InvalidInputError("--date", args.date, exc.allowed) from None
        raise
    where = write_output(out, pdf, force=args.force)
    from procplan.output.sheet_data import document_number, plan_hash

    info = info_stream(args.output)
    print(
        f"batch-plan sheet {document_number(site.document_prefix, plan_hash(plan))} rev {revision} "
        f"written to {where} ({paper})",
        file=info,
    )
    print(CAUTION_SHORT, file=info)
    return EXIT_OK


def _destination(args, lib, kind: str, inputs=()) -> Path | None:
    """Where ``procplan new`` writes: ``--output`` (None for ``-``, standard output), else the library's
    ``KIND/NAME.toml``; an existing file only with ``--force``, an input never."""
    from procplan.files.tomlfile import check_name

    check_name("NAME", args.name)
    if args.output:
        return output_target("--output", args.output, force=args.force, inputs=inputs, suffix=".toml")
    dest = Path(lib.root) / kind / f"{args.name}.toml"
    if dest.exists() and not args.force:
        raise InvalidInputError(
            "NAME",
            args.name,
            f"a name not used in {dest.parent}, or --force to replace it",
            "refusing to overwrite",
        )
    return dest


def _written_to(dest: Path | None) -> str:
    return "standard output" if dest is None else str(dest)


def cmd_new_product(args) -> int:
    from procplan.files.product import product_from_dict, product_to_dict
    from procplan.files.tomlfile import dump_toml

    lib = load_library_of(args)
    if args.template not in lib.products:
        raise InvalidInputError("--template", args.template, "one of " + ", ".join(sorted(lib.products)))
    dest = _destination(args, lib, "products")
    tpl = lib.products[args.template]
    desc = f"from template {args.template}" + (f": {tpl.description}" if tpl.description else "")
    product = dataclasses.replace(tpl, name=args.name, description=desc, library=None)
    data = product_to_dict(product)
    data.pop("library", None)
    product_from_dict(data, _written_to(dest), prefix="")  # what is written must load again
    write_output(dest, dump_toml(data), force=args.force)
    print(
        f"product {args.name} written to {_written_to(dest)} (from template {args.template}); edit it, then "
        "`procplan library check`",
        file=info_stream(args.output),
    )
    return EXIT_OK


def cmd_new_plan(args) -> int:
    from procplan.files.plan import plan_from_dict
    from procplan.files.tomlfile import dump_toml, read_toml

    lib = load_library_of(args)
    if args.product not in lib.products:
        raise InvalidInputError("--product", args.product, "one of " + ", ".join(sorted(lib.products)))
    tpl_path = Path(args.template)
    if not tpl_path.exists():
        if args.template not in lib.plans:
            raise InvalidInputError(
                "--template", args.template, "a plan file or one of " + ", ".join(sorted(lib.plans))
            )
        tpl_path = lib.plans[args.template]
    dest = _destination(args, lib, "plans", inputs=[tpl_path, args.site])
    data = read_toml(tpl_path)
    site = load_site_of(args, lib)
    template_name = tpl_path.stem
    data["title"] = (
        _text_option("--title", args.title, 200) or f"{args.product}: {data.get('title', template_name)}"
    )
    data["notes"] = (
        f"Made from template plan {template_name} for product {args.product}: check the steps, settings and checks "
        "before use."
    )
    data["product"] = {"library": args.product}
    checks = dict(data.get("checks") or {})
    from_site = []
    for key, value in (("margin_percent", site.margin_percent), ("margin_min", site.margin_min)):
        if key not in checks:
            checks[key] = int(value) if float(value).is_integer() else value
            from_site.append(key)
    data["checks"] = checks
    plan_from_dict(data, source=_written_to(dest), library=lib)  # what is written must load again
    write_output(dest, dump_toml(data), force=args.force)
    extra = f"; {' and '.join(from_site)} from the site settings" if from_site else ""
    print(
        f"plan {args.name} written to {_written_to(dest)} (template {template_name}, product {args.product}{extra})",
        file=info_stream(args.output),
    )
    return EXIT_OK


def cmd_site(args) -> int:
    from procplan.files.site import site_to_text

    lib = load_library_of(args)
    print(site_to_text(load_site_of(args, lib)))
    return EXIT_OK


def register(subparsers, full: frozenset[str] = frozenset()) -> None:
    """Add ``sheet``, ``new`` and ``site`` to the ``procplan`` command."""
    s = subparsers.add_parser(
        "sheet",
        help="write the printable batch-plan sheet (PDF) of a plan",
        description="Run a plan and write its batch-plan sheet: header, product and equipment, steps and plan "
        "times, chart, checkpoints, rule compliance, lethality, freezing, energy, provenance, signatures.",
    )
    s.add_argument("plan", help="plan file (TOML), or the name of a library plan")
    s.add_argument(
        "-o", "--output", required=True, metavar="FILE", help="PDF file to write (- for standard output)"
    )
    s.add_argument("--paper", default=None, help="a4 or letter (default: the site's)")
    s.add_argument("--lot", default="", metavar="ID", help="lot id printed in the header")
    s.add_argument("--revision", default="A", metavar="R", help="document revision (default A)")
    s.add_argument("--prepared-by", default="", metavar="NAME", help="name for the 'prepared by' box")
    s.add_argument("--date", default=None, metavar="YYYY-MM-DD", help="date of the sheet (default today)")
    s.add_argument("--site", default=None, metavar="FILE", help="site settings (default: the demo plant's)")
    s.add_argument("--force", action="store_true", help="replace an existing PDF")
    s.set_defaults(func=cmd_sheet)

    n = subparsers.add_parser(
        "new",
        help="make a new product or plan file from a template",
        description="Write a new product or plan TOML file from a template, atomically; an existing file is "
        "replaced only with --force.",
    )
    nsub = n.add_subparsers(dest="kind", required=True)
    np_ = nsub.add_parser(
        "product",
        help="a new library product from a library product",
        description="Copy a library product under a new name into the library's products/ folder (or --output).",
    )
    np_.add_argument("name", metavar="NAME", help="new product name (a-z 0-9 . _ -)")
    np_.add_argument("--template", required=True, metavar="LIBRARY_PRODUCT", help="library product to copy")
    np_.add_argument(
        "-o", "--output", default=None, metavar="FILE", help="write here instead of the library (- prints it)"
    )
    np_.add_argument("--force", action="store_true", help="replace an existing file")
    np_.set_defaults(func=cmd_new_product)
    nl = nsub.add_parser(
        "plan",
        help="a new plan from a template plan for a library product",
        description="Copy a plan's steps and checks for another library product into the library's plans/ "
        "folder (or --output). Margins missing from the template come from the site settings.",
    )
    nl.add_argument("name", metavar="NAME", help="new plan name (a-z 0-9 . _ -)")
    nl.add_argument("--product", required=True, metavar="P", help="library product of the new plan")
    nl.add_argument("--template", required=True, metavar="PLAN", help="library plan name or plan file")
    nl.add_argument("--title", default=None, help="title of the new plan")
    nl.add_argument(
        "-o", "--output", default=None, metavar="FILE", help="write here instead of the library (- prints it)"
    )
    nl.add_argument("--force", action="store_true", help="replace an existing file")
    nl.add_argument("--site", default=None, metavar="FILE", help="site settings (default: the demo plant's)")
    nl.set_defaults(func=cmd_new_plan)

    st = subparsers.add_parser(
        "site",
        help="print the site settings",
        description="Print the site settings (plant, lines, display units, default margins and rules, tariff).",
    )
    st.add_argument(
        "--site", default=None, metavar="FILE", help="site settings file (default: the demo plant's)"
    )
    st.set_defaults(func=cmd_site)
