#!/usr/bin/env python3
"""Strict markup checks for the review packet (used by tests/report/test_report.cpp).

  check_markup.py html FILE   strict well-formedness of report.html; prints the tables that have an
                              id as JSON {id: {"headers": [...], "rows": [[cell, ...], ...]}}
  check_markup.py svg FILE..  every file parses as XML (xml.etree) with an <svg> root and a viewBox

Exit status 0 when every check passes, 1 otherwise (the problems go to stderr).

"Strict" for HTML means more than the browser's forgiving parser asks: the document starts with
<!DOCTYPE html>; every element is closed by its own end tag, in order (void elements excepted;
the self-closing form <x/> only for void elements and inside <svg>); no duplicate attributes; ids
unique; every local reference (href="#x", url(#x)) resolves; no '<' or '&' left unescaped in text;
no XML declaration or processing instruction; each inline <svg> also parses as XML on its own.
Standard library only (html.parser, xml.etree), Python 3.9+.
"""
import json
import re
import sys
import xml.etree.ElementTree as ET
from html.parser import HTMLParser

VOID = {"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta", "source", "track", "wbr"}
REF = re.compile(r"url\(#([^)]+)\)")


class StrictParser(HTMLParser):
    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.stack = []
        self.errors = []
        self.ids = set()
        self.refs = []
        self.tables = {}
        self.table = None  # (id, depth) of the table being captured
        self.row = None
        self.cell = None
        self.in_head = False
        self.seen_doctype = False
        self.seen_element = False

    def where(self):
        line, col = self.getpos()
        return f"line {line}, column {col + 1}"

    def error(self, message):
        self.errors.append(f"{self.where()}: {message}")

    def in_svg(self):
        return "svg" in self.stack

    def attributes(self, tag, attrs):
        names = [name for name, _ in attrs]
        if len(names) != len(set(names)):
            self.error(f"<{tag}> has a duplicate attribute: {names}")
        for name, value in attrs:
            if value is None:
                continue
            if name == "id":
                if value in self.ids:
                    self.error(f"duplicate id '{value}'")
                self.ids.add(value)
            if name in ("href", "xlink:href") and value.startswith("#"):
                self.refs.append((value[1:], self.where()))
            for ref in REF.findall(value):
                self.refs.append((ref, self.where()))

    def handle_decl(self, decl):
        if self.seen_element or self.seen_doctype:
            self.error(f"unexpected declaration <!{decl}>")
        if decl.lower() != "doctype html":
            self.error(f"the doctype is <!{decl}>, not <!DOCTYPE html>")
        self.seen_doctype = True

    def handle_pi(self, data):
        self.error(f"processing instruction <?{data}>")

    def unknown_decl(self, data):
        self.error(f"unknown declaration <![{data}]>")

    def handle_starttag(self, tag, attrs):
        if not self.seen_doctype and not self.seen_element:
            self.error("the document does not start with <!DOCTYPE html>")
        self.seen_element = True
        self.attributes(tag, attrs)
        if tag in VOID and not self.in_svg():
            return
        self.stack.append(tag)
        self.capture_start(tag, dict(attrs))

    def handle_startendtag(self, tag, attrs):
        self.seen_element = True
        self.attributes(tag, attrs)
        if tag not in VOID and not self.in_svg():
            self.error(f"<{tag}/> is not a void element: it needs an end tag")

    def handle_endtag(self, tag):
        if tag in VOID and not self.in_svg():
            self.error(f"end tag </{tag}> of a void element")
            return
        if not self.stack:
            self.error(f"end tag </{tag}> with no open element")
            return
        if self.stack[-1] != tag:
            self.error(f"end tag </{tag}> closes <{self.stack[-1]}> (open: {' > '.join(self.stack[-6:])})")
            if tag in self.stack:  # recover to keep later messages meaningful
                while self.stack and self.stack.pop() != tag:
                    pass
            return
        self.stack.pop()
        self.capture_end(tag)

    def handle_data(self, data):
        if self.cell is not None:
            self.cell.append(data)

    # --- table capture (tables with an id, cells as plain text)
    def capture_start(self, tag, attrs):
        if tag == "table" and "id" in attrs and self.table is None:
            self.table = (attrs["id"], len(self.stack))
            self.tables[attrs["id"]] = {"headers": [], "rows": []}
        elif self.table is not None:
            if tag == "tr":
                self.row = []
            elif tag in ("td", "th") and self.row is not None:
                self.cell = []

    def capture_end(self, tag):
        if self.table is None:
            return
        if tag in ("td", "th") and self.cell is not None and self.row is not None:
            self.row.append((tag, " ".join("".join(self.cell).split())))
            self.cell = None
        elif tag == "tr" and self.row is not None:
            table = self.tables[self.table[0]]
            if self.row and all(kind == "th" for kind, _ in self.row):
                table["headers"] = [text for _, text in self.row]
            else:
                table["rows"].append([text for _, text in self.row])
            self.row = None
        elif tag == "table" and len(self.stack) + 1 == self.table[1]:
            self.table = None


def raw_text_problems(source):
    """'<' and '&' that are not markup or entities (html.parser would take them as text)."""
    problems = []
    for m in re.finditer(r"<(?![A-Za-z/!?])", source):
        problems.append(f"offset {m.start()}: unescaped '<'")
    for m in re.finditer(r"&(?!(?:[A-Za-z][A-Za-z0-9]*|#[0-9]+|#x[0-9A-Fa-f]+);)", source):
        problems.append(f"offset {m.start()}: unescaped '&'")
    return problems[:20]


def check_html(path):
    source = open(path, encoding="utf-8").read()
    parser = StrictParser()
    parser.feed(source)
    parser.close()
    errors = list(parser.errors)
    if parser.stack:
        errors.append(f"unclosed elements at the end: {' > '.join(parser.stack)}")
    if not parser.seen_doctype:
        errors.append("no <!DOCTYPE html>")
    for ref, where in parser.refs:
        if ref not in parser.ids:
            errors.append(f"{where}: reference to a missing id '#{ref}'")
    errors += raw_text_problems(re.sub(r"<style>.*?</style>", "", source, flags=re.S))
    for tag in ("html", "head", "body", "title", "main"):
        count = len(re.findall(rf"<{tag}[\s>]", source))
        if count != 1:
            errors.append(f"<{tag}> appears {count} times")
    svgs = re.findall(r"<svg\b.*?</svg>", source, flags=re.S)
    for k, svg in enumerate(svgs):
        try:
            root = ET.fromstring(svg)
            if not root.tag.endswith("}svg") or "viewBox" not in root.attrib:
                errors.append(f"inline svg {k + 1}: root {root.tag} without a viewBox")
        except ET.ParseError as e:
            errors.append(f"inline svg {k + 1} is not well-formed XML: {e}")
    for e in errors[:40]:
        print(f"{path}: {e}", file=sys.stderr)
    print(json.dumps({"tables": parser.tables, "svg_count": len(svgs)}))
    return not errors


def check_svg(paths):
    ok = True
    for path in paths:
        try:
            root = ET.parse(path).getroot()
        except ET.ParseError as e:
            print(f"{path}: not well-formed XML: {e}", file=sys.stderr)
            ok = False
            continue
        if root.tag != "{http://www.w3.org/2000/svg}svg":
            print(f"{path}: the root element is {root.tag}, not svg", file=sys.stderr)
            ok = False
        if "viewBox" not in root.attrib:
            print(f"{path}: no viewBox", file=sys.stderr)
            ok = False
    return ok


def main(argv):
    if len(argv) >= 3 and argv[1] == "html":
        return 0 if check_html(argv[2]) else 1
    if len(argv) >= 3 and argv[1] == "svg":
        return 0 if check_svg(argv[2:]) else 1
    print(__doc__, file=sys.stderr)
    return 2


if __name__ == "__main__":
    sys.exit(main(sys.argv))
