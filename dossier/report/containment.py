"""Self-containment of the dossier's HTML: nothing it shows is fetched from anywhere.

- ``outside_references`` finds every reference in a page that would load or link something
  outside it: URL attributes, forbidden tags (script, iframe, link, ...), event handlers, a
  meta refresh, and CSS ``url()``/``@import``/``image-set()`` found with a real CSS tokenizer
  (tinycss2, a WeasyPrint dependency), so escapes such as ``\\75 rl(`` do not hide one;
- ``embed_local_images`` embeds the images of a user's template folder as data: URIs and refuses
  every other outside reference;
- ``with_csp`` gives every page the Content-Security-Policy ``CSP`` (no fetch of any kind; images
  only as data: URIs), so a browser loads nothing even if a reference slipped past the checks.
"""
from __future__ import annotations

import base64
import html.parser
import mimetypes
import re
from pathlib import Path
from urllib.parse import unquote, urlparse

from dossier.errors import BuildError

_URL_ATTRS = {"src", "href", "xlink:href", "srcset", "poster", "data", "action", "formaction", "background",
              "cite", "longdesc", "usemap", "manifest", "icon", "ping", "lowsrc", "dynsrc"}
_FORBIDDEN_TAGS = {"script", "iframe", "frame", "object", "embed", "base", "link", "applet", "portal"}
#: The policy every dossier page carries: nothing is fetched, from the network or from files
#: (the stylesheet and figures are inline; images are data: URIs).
CSP = ("default-src 'none'; img-src data:; font-src data:; style-src 'unsafe-inline'; "
       "base-uri 'none'; form-action 'none'")
CSP_META = f'<meta http-equiv="Content-Security-Policy" content="{CSP}">'
#: CSS functions whose string arguments are fetched
_CSS_FETCHING = {"url", "src", "image", "image-set", "-webkit-image-set", "cross-fade", "element"}


def _css_walk(nodes, refs: list[str]) -> None:
    import tinycss2.ast as ast

    for node in nodes or ():
        if isinstance(node, ast.URLToken):
            refs.append(node.value.strip())
        elif isinstance(node, ast.FunctionBlock):
            if node.lower_name in _CSS_FETCHING:
                refs += [a.value.strip() for a in node.arguments if isinstance(a, (ast.StringToken, ast.URLToken))]
            _css_walk(node.arguments, refs)
        elif isinstance(node, ast.AtRule):
            if node.lower_at_keyword == "import":
                refs += [t.value.strip() for t in node.prelude if isinstance(t, (ast.StringToken, ast.URLToken))]
            _css_walk(node.prelude, refs)
            _css_walk(node.content, refs)
        elif isinstance(node, (ast.QualifiedRule, ast.Declaration)):
            _css_walk(getattr(node, "prelude", None), refs)
            _css_walk(getattr(node, "content", None) if isinstance(node, ast.QualifiedRule) else node.value, refs)
        elif isinstance(node, (ast.SquareBracketsBlock, ast.ParenthesesBlock, ast.CurlyBracketsBlock)):
            _css_walk(node.content, refs)


def css_references(text: str, *, inline: bool = False) -> list[str]:
    """Every URL a stylesheet (or a style="" attribute, `inline`) would fetch, found by a real CSS
    tokenizer (tinycss2), so escapes such as ``\\75 rl(...)`` for ``url(...)`` are seen through."""
    import tinycss2

    refs: list[str] = []
    if inline:
        nodes = tinycss2.parse_blocks_contents(text, skip_comments=True, skip_whitespace=True)
        for node in nodes:
            if node.type == "declaration":
                _css_walk(node.value, refs)
            else:
                _css_walk([node], refs)
    else:
        _css_walk(tinycss2.parse_stylesheet(text, skip_comments=True, skip_whitespace=True), refs)
    return refs


class _RefCollector(html.parser.HTMLParser):
    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.refs: list[tuple[str, str]] = []  # (what, value)
        self.tags: list[str] = []
        self._in_style = False

    def handle_starttag(self, tag, attrs):
        tag = tag.lower()
        if tag in _FORBIDDEN_TAGS:
            self.tags.append(tag)
        if tag == "meta" and any((k or "").lower() == "http-equiv" and (v or "").lower() == "refresh" for k, v in attrs):
            self.tags.append("meta refresh")
        for k, v in attrs:
            k = (k or "").lower()
            if v is None:
                continue
            if k in _URL_ATTRS:
                self.refs.append((f"{tag} {k}", v.strip()))
            elif k == "style":
                self._css(v, inline=True)
            elif k.startswith("on"):
                self.tags.append(f"{tag} {k} handler")
        self._in_style = tag == "style"

    def handle_endtag(self, tag):
        self._in_style = False

    def handle_data(self, data):
        if self._in_style:
            self._css(data)

    def _css(self, text, inline=False):
        self.refs += [("css url", ref) for ref in css_references(text, inline=inline)]


def _inside_ok(value: str) -> bool:
    return value == "" or value.startswith("#") or value.lower().startswith("data:")


def outside_references(text: str) -> list[str]:
    """Every reference in the HTML that would load or link something outside the page."""
    p = _RefCollector()
    p.feed(text)
    p.close()
    bad = [f"<{t}>" for t in p.tags]
    bad += [f"{what}={value!r}" for what, value in p.refs if not _inside_ok(value)]
    return bad


def embed_local_images(text: str, templates_dir: Path | None) -> str:
    """Embed images of the user's template folder as data URIs; refuse every other outside reference."""
    p = _RefCollector()
    p.feed(text)
    p.close()
    if p.tags:
        raise BuildError(f"template uses {p.tags[0]}, which a self-contained dossier cannot have",
                         where=_where(templates_dir))
    root = Path(templates_dir).resolve() if templates_dir else None
    for what, value in p.refs:
        if _inside_ok(value):
            continue
        parsed = urlparse(value)
        target = None
        if root is not None and not parsed.scheme and not parsed.netloc and what.endswith(("src", "href")):
            candidate = (root / unquote(parsed.path)).resolve()
            if candidate.is_relative_to(root) and candidate.is_file() and (mimetypes.guess_type(candidate.name)[0] or "").startswith("image/"):
                target = candidate
        if target is None:
            raise BuildError(f"template refers to {value!r} ({what}); the dossier embeds everything and loads no outside file or URL",
                             where=_where(templates_dir))
        mime = mimetypes.guess_type(target.name)[0]
        uri = f"data:{mime};base64,{base64.b64encode(target.read_bytes()).decode('ascii')}"
        text = text.replace(f'"{value}"', f'"{uri}"').replace(f"'{value}'", f"'{uri}'")
    return text


def with_csp(text: str) -> str:
    """The page with the dossier's Content-Security-Policy first in its head (added when a user
    template left it out; a browser applies every policy a page states, so ours always holds)."""
    if CSP_META in text:
        return text
    m = re.search(r"<head[^>]*>", text, re.I)
    if m is None:
        raise BuildError("template has no <head>; the dossier's Content-Security-Policy needs one")
    return text[: m.end()] + "\n" + CSP_META + text[m.end():]


def _where(templates_dir: Path | None) -> str:
    """The template folder an error names: the user's, else the built-in one."""
    from dossier.report.render import TEMPLATES_DIR

    return str(templates_dir or TEMPLATES_DIR)
