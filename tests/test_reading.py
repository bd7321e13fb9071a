"""Reading documents: each format's blocks, decoding, and every error path's one-line message.

Fixtures live in tests/data/reading/ (invented texts); the PDF and DOCX files are built here
(PDFs laid out by bench/fuzz_readers.pdf_file, which the fuzzing bench uses too).
"""

from __future__ import annotations

import io
import zipfile
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from bench.fuzz_readers import pdf_file
from summarize import reading
from summarize.reading import decode, entry
from summarize.reading import (
    Block,
    Document,
    ReadError,
    decode_bytes,
    looks_english,
    parse_text,
    read_document,
)

DATA = Path(__file__).resolve().parent / "data" / "reading"
DEMO = Path(__file__).resolve().parents[1] / "demo_docs"

H, P, I = "heading", "paragraph", "item"


def shape(doc: Document) -> list[tuple[str, int, str]]:
    return [(b.kind, b.level, b.text) for b in doc.blocks]


# --------------------------------------------------------------------------------------------
# Builders for binary fixtures
# --------------------------------------------------------------------------------------------


def make_pdf(pages: list[list[tuple[int, str]]], gap_after: tuple[set[int], ...] = ()) -> bytes:
    """A minimal valid PDF written by hand: one content stream per page, standard Helvetica.

    ``pages`` holds (font size, line of text) pairs; ``gap_after[p]`` lists line indexes on page
    p followed by a wider vertical gap (a paragraph break).
    """
    objects: list[bytes] = []
    n_pages = len(pages)
    font_id = 3 + 2 * n_pages
    kids = " ".join(f"{3 + 2 * k} 0 R" for k in range(n_pages))
    objects.append(b"<< /Type /Catalog /Pages 2 0 R >>")
    objects.append(f"<< /Type /Pages /Kids [{kids}] /Count {n_pages} >>".encode())
    for k, lines in enumerate(pages):
        gaps = gap_after[k] if k < len(gap_after) else set()
        ops = ["BT", "72 740 Td"]
        for i, (size, text) in enumerate(lines):
            escaped = text.replace("\\", "\\\\").replace("(", "\\(").replace(")", "\\)")
            ops.append(f"/F1 {size} Tf ({escaped}) Tj")
            ops.append("0 -30 Td" if i in gaps else "0 -15 Td")
        ops.append("ET")
        stream = "\n".join(ops).encode("latin-1")
        objects.append(
            f"<< /Type /Page /Parent 2 0 R /MediaBox [0 0 612 792] "
            f"/Resources << /Font << /F1 {font_id} 0 R >> >> /Contents {4 + 2 * k} 0 R >>".encode()
        )
        objects.append(b"<< /Length %d >>\nstream\n" % len(stream) + stream + b"\nendstream")
    objects.append(b"<< /Type /Font /Subtype /Type1 /BaseFont /Helvetica /Encoding /WinAnsiEncoding >>")
    return pdf_file(objects)


GAUGE_NOTE = [
    (16, "BRINDLE FOLD GAUGE NOTE"),
    (11, "The weekly reading at the Brindle Fold gauge showed that the wa-"),
    (11, "ter level had risen by forty centimetres since the last visit, and"),
    (11, "the spillway was running for the first time this season."),
    (11, "Staff found no damage to the footbridge or to the old fish pass."),
    (11, "1"),
]


def make_docx(path: Path) -> Path:
    import docx
    from docx.oxml import OxmlElement
    from docx.oxml.ns import qn

    document = docx.Document()
    document.add_heading("Orchard Survey", 0)
    document.add_heading("Findings", 1)
    document.add_paragraph("The  survey counted\ttrees in the   lower field.")
    document.add_paragraph("Apples were healthy", style="List Bullet")
    document.add_paragraph("Two trees need pruning", style="List Bullet 2")
    document.add_paragraph("Measure the hedge", style="List Number")
    numbered = document.add_paragraph("Numbered by direct formatting")
    num_pr = OxmlElement("w:numPr")
    for tag, value in (("w:ilvl", "1"), ("w:numId", "1")):
        child = OxmlElement(tag)
        child.set(qn("w:val"), value)
        num_pr.append(child)
    numbered._p.get_or_add_pPr().append(num_pr)
    document.add_heading("Counts", 2)
    table = document.add_table(rows=2, cols=3)
    for col, text in enumerate(("Variety", "Trees", "Notes")):
        table.cell(0, col).text = text
    table.cell(1, 0).text = "Russet"
    table.cell(1, 1).text = "14"
    table.cell(1, 1).merge(table.cell(1, 2))
    document.add_paragraph("")
    document.add_paragraph("Closing remark.")
    document.save(path)
    return path


# --------------------------------------------------------------------------------------------
# Each format parses into the expected blocks
# --------------------------------------------------------------------------------------------

FIXTURES = [
    (
        "notes.txt",
        "txt",
        "utf-8",
        [
            (H, 1, "LARKSPUR LANE ALLOTMENT SOCIETY"),
            (H, 1, "SPRING NEWSLETTER"),
            (P, 0, "Date: Saturday 5 April"),
            (P, 0, "Place: The seed shed, plot 14"),
            (H, 1, "1. WELCOME"),
            (
                P,
                0,
                "The committee thanks every member who came to the winter work party. Twenty-two people "
                "cleared the brambles along the north fence, and the compost bays were rebuilt with timber "
                "from the old greenhouse.",
            ),
            (P, 0, "Water charges will stay the same this year."),
            (H, 1, "2. Plot news"),
            (H, 2, "2.1 New tenants"),
            (P, 0, "Three plots were let in March:"),
            (I, 1, "Plot 9 to a family from Mill Row"),
            (I, 1, "Plot 21 to two retired teachers"),
            (I, 2, "they hope to grow heritage beans"),
            (I, 1, "Plot 30, which had been empty since the autumn storms"),
            (H, 2, "Rules for bonfires"),
            (P, 0, "Bonfires are allowed only on the first Sunday of the month."),
            (I, 1, "Burn dry material only."),
            (I, 1, "Never leave a fire unattended."),
            (H, 1, "VOLUNTEERS"),
            (P, 0, "Ada Quennell (water butts)"),
            (P, 0, "Boris Tamberlane (seed swap)"),
            (P, 0, "Cecily Oduya (accounts)"),
            (P, 0, "Thank you for reading."),
        ],
    ),
    (
        "guide.md",
        "md",
        "utf-8",
        [
            (H, 1, "Pond Care Guide"),
            (P, 0, "A short guide for the Brindle Fold wildlife pond, written for new volunteers. See the rota for dates."),
            (H, 2, "Weekly tasks"),
            (I, 1, "Skim fallen leaves with the long net."),
            (I, 1, "Check the pump_inlet filter:"),
            (I, 2, "Lift the grille."),
            (I, 2, "Rinse the sponge in pond water, never tap water."),
            (I, 1, "Record the water level on the board."),
            (H, 3, "Safety"),
            (P, 0, "Always work in pairs near deep water. Keep the rescue pole by the gate."),
            (P, 0, "Season; Task; Hours"),
            (P, 0, "Spring; Divide the irises; 3"),
            (P, 0, "Autumn; Net the surface; 2"),
            (P, 0, "Questions? Write to the pond warden at warden@example.org."),
        ],
    ),
    (
        "page.html",
        "html",
        "utf-8",
        [
            (H, 1, "Heath Bee Count & Survey 2024"),
            (P, 0, "Volunteers walked the eight transects on Mossgate Heath between May and August. They counted 1,204 bumblebees."),
            (P, 0, "Loose text in a div still counts."),
            (P, 0, "After two breaks, a new paragraph."),
            (H, 2, "What we found"),
            (I, 1, "Heather was the busiest plant."),
            (I, 2, "Bell heather peaked in July."),
            (I, 1, "Cold weeks cut the count by half."),
            (P, 0, "Counts by month"),
            (P, 0, "Month; Bees"),
            (P, 0, "June; 388"),
            (P, 0, "\u201cA good year for the heath,\u201d said the warden."),
            (P, 0, "Transect"),
            (P, 0, "A fixed walking route."),
        ],
    ),
    (
        "cp1252.txt",
        "txt",
        "cp1252",
        [
            (H, 2, "Caf\u00e9 notes"),
            (P, 0, "The na\u00efve gardener\u2019s cr\u00e8me br\u00fbl\u00e9e stall raised \u20ac40 for the fa\u00e7ade fund \u2014 a record."),
        ],
    ),
    (
        "utf16.txt",
        "txt",
        "utf-16",
        [
            (H, 2, "R\u00e9sum\u00e9 of the ferry timetable"),
            (P, 0, "Boats leave the quay at 07:15 and 16:40 every day except Sunday."),
        ],
    ),
]


@pytest.mark.parametrize("name, fmt, encoding, expected", FIXTURES, ids=[f[0] for f in FIXTURES])
def test_fixture_parses_into_expected_blocks(name, fmt, encoding, expected):
    doc = read_document(DATA / name)
    assert shape(doc) == expected
    assert doc.format == fmt
    assert doc.encoding == encoding
    assert doc.source == str(DATA / name)


VANISHING = [
    "MUST-VANISH",  # every marker in the fixtures contains this
    "tracking",
    "document.title",
    "color: #222",
    "Home",
    "2024 \u00a9",
    "\u00a9",
]


@pytest.mark.parametrize("needle", VANISHING)
def test_html_script_style_nav_and_hidden_text_never_reach_the_document(needle):
    doc = read_document(DATA / "page.html")
    assert needle not in doc.text


def test_markdown_front_matter_comments_and_code_are_dropped():
    text = read_document(DATA / "guide.md").text
    for needle in ("MUST-VANISH", "Front matter", "draft", "heron", "secret_code", "```", "**", "https://"):
        assert needle not in text


def test_docx_headings_lists_numbering_and_tables(tmp_path):
    doc = read_document(make_docx(tmp_path / "orchard.docx"))
    assert doc.format == "docx" and doc.encoding is None
    assert shape(doc) == [
        (H, 1, "Orchard Survey"),
        (H, 1, "Findings"),
        (P, 0, "The survey counted trees in the lower field."),
        (I, 1, "Apples were healthy"),
        (I, 2, "Two trees need pruning"),
        (I, 1, "Measure the hedge"),
        (I, 2, "Numbered by direct formatting"),
        (H, 2, "Counts"),
        (P, 0, "Variety; Trees; Notes"),
        (P, 0, "Russet; 14"),
        (P, 0, "Closing remark."),
    ]


def test_pdf_text_hyphenation_paragraph_gaps_and_page_numbers(tmp_path):
    path = tmp_path / "gauge.pdf"
    path.write_bytes(make_pdf([GAUGE_NOTE], gap_after=({0, 3},)))
    doc = read_document(path)
    assert doc.format == "pdf" and doc.encoding is None
    assert shape(doc) == [
        (H, 1, "BRINDLE FOLD GAUGE NOTE"),
        (
            P,
            0,
            "The weekly reading at the Brindle Fold gauge showed that the water level had risen by forty "
            "centimetres since the last visit, and the spillway was running for the first time this season.",
        ),
        (P, 0, "Staff found no damage to the footbridge or to the old fish pass."),
    ]
    assert "wa-" not in doc.text and "water" in doc.text


def test_pdf_paragraph_continues_across_a_page_break(tmp_path):
    path = tmp_path / "two_pages.pdf"
    pages = [
        [(11, "The reservoir at Greyhollow was still filling when the survey"), (11, "Page 1 of 2")],
        [(11, "team arrived, so the boat could not be launched until noon."), (11, "Page 2 of 2")],
    ]
    path.write_bytes(make_pdf(pages))
    doc = read_document(path)
    assert shape(doc) == [
        (
            P,
            0,
            "The reservoir at Greyhollow was still filling when the survey team arrived, so the boat could "
            "not be launched until noon.",
        )
    ]


# --------------------------------------------------------------------------------------------
# Plain-text, Markdown and HTML rules, one small case at a time
# --------------------------------------------------------------------------------------------

TXT_CASES = [
    ("hard-wrapped lines join", "The pump was checked on\nMonday and again on Friday.", [(P, 0, "The pump was checked on Monday and again on Friday.")]),
    (
        "short last line ends a paragraph inside a wrapped block",
        "The east meadow was cut in the second week of July this year, as usual.\n"
        "Hay was baled the same day.\n"
        "Rain stopped work on the west meadow for most of the following week, and\n"
        "so it was cut in August.",
        [
            (P, 0, "The east meadow was cut in the second week of July this year, as usual. Hay was baled the same day."),
            (P, 0, "Rain stopped work on the west meadow for most of the following week, and so it was cut in August."),
        ],
    ),
    ("hyphenated compound across lines", "It was a long-\nterm plan for the pond.", [(P, 0, "It was a long-term plan for the pond.")]),
    ("ragged lines stay apart", "Harrow Cottage\nMill Row\nUpper Brindle", [(P, 0, "Harrow Cottage"), (P, 0, "Mill Row"), (P, 0, "Upper Brindle")]),
    ("setext === heading", "Annual Report\n=============\n\nAll went well.", [(H, 1, "Annual Report"), (P, 0, "All went well.")]),
    ("setext --- heading", "Costs\n-----\n\nThey rose.", [(H, 2, "Costs"), (P, 0, "They rose.")]),
    ("all caps heading", "FINANCE\n\nThe budget balanced.", [(H, 1, "FINANCE"), (P, 0, "The budget balanced.")]),
    ("multi-level numbered heading", "2.3 Water quality\n\nIt was good.", [(H, 2, "2.3 Water quality"), (P, 0, "It was good.")]),
    ("three-level numbered heading", "4.1.2 Sampling points\nThe samples came from the three inlets on the north shore.", [(H, 3, "4.1.2 Sampling points"), (P, 0, "The samples came from the three inlets on the north shore.")]),
    ("a number that starts a sentence is not a heading", "2.3 million people use the footpath each year.", [(P, 0, "2.3 million people use the footpath each year.")]),
    ("numbered lines in one block are items", "1. Apples\n2. Pears", [(I, 1, "Apples"), (I, 1, "Pears")]),
    ("loose numbered list stays a list", "1. Apples\n\n2. Pears\n\n3. Cherries", [(I, 1, "Apples"), (I, 1, "Pears"), (I, 1, "Cherries")]),
    ("numbered sentence is an item", "1. Check the gauge before nine.", [(I, 1, "Check the gauge before nine.")]),
    ("numbered title between paragraphs is a heading", "Intro text.\n\n1. Method\n\nWe walked.", [(P, 0, "Intro text."), (H, 1, "1. Method"), (P, 0, "We walked.")]),
    ("bullet markers", "- dash\n* star\n\u2022 dot", [(I, 1, "dash"), (I, 1, "star"), (I, 1, "dot")]),
    ("letter and roman markers", "a) first\n(b) second\niv) fourth", [(I, 1, "first"), (I, 1, "second"), (I, 1, "fourth")]),
    ("nesting by indentation", "- top\n    - deeper\n        - deepest\n- top again", [(I, 1, "top"), (I, 2, "deeper"), (I, 3, "deepest"), (I, 1, "top again")]),
    ("item continuation lines", "- Check the gauge every\n  morning before nine.", [(I, 1, "Check the gauge every morning before nine.")]),
    ("short line alone is a heading", "Background\n\nThe pond was dug in 1998.", [(H, 2, "Background"), (P, 0, "The pond was dug in 1998.")]),
    ("short line at the end is not a heading", "The pond was dug in 1998.\n\nKind regards", [(P, 0, "The pond was dug in 1998."), (P, 0, "Kind regards")]),
    ("title above a wrapped paragraph", "Background\nThe pond was dug in 1998 by volunteers from the village, and\nrelined in 2011 after a dry summer.", [(H, 2, "Background"), (P, 0, "The pond was dug in 1998 by volunteers from the village, and relined in 2011 after a dry summer.")]),
    ("label lines are not headings", "Date: 5 May\n\nWe met.", [(P, 0, "Date: 5 May"), (P, 0, "We met.")]),
    ("separators vanish", "One.\n\n***\n\n-----\n\nTwo.", [(P, 0, "One."), (P, 0, "Two.")]),
    ("windows newlines and form feeds", "First page.\r\n\fSecond page.\r\n", [(P, 0, "First page."), (P, 0, "Second page.")]),
    ("invisible characters removed", "wa\u00adter\u200b level", [(P, 0, "water level")]),
]


@pytest.mark.parametrize("text, expected", [c[1:] for c in TXT_CASES], ids=[c[0] for c in TXT_CASES])
def test_plain_text_rules(text, expected):
    assert shape(parse_text(text, "txt")) == expected


MD_CASES = [
    ("atx levels and closing hashes", "# One\n## Two ##\n###### Six", [(H, 1, "One"), (H, 2, "Two"), (H, 6, "Six")]),
    ("hash without space is text", "#hashtag here", [(P, 0, "#hashtag here")]),
    ("heading id attribute", "# Results {#results}\n\nText.", [(H, 1, "Results"), (P, 0, "Text.")]),
    ("setext h2", "Costs\n---\n\nThey rose.", [(H, 2, "Costs"), (P, 0, "They rose.")]),
    ("emphasis variants", "***all*** and **bold** and __under__ and *it* and _it_ and ~~gone~~", [(P, 0, "all and bold and under and it and it and gone")]),
    ("underscores inside words stay", "the snake_case_name stays", [(P, 0, "the snake_case_name stays")]),
    ("inline code keeps content", "Use `a*b*c` and ``x ` y`` here", [(P, 0, "Use a*b*c and x ` y here")]),
    ("escapes", "\\*not emphasis\\* and 1\\. fine", [(P, 0, "*not emphasis* and 1. fine")]),
    ("links keep text, images vanish", "See [the map](http://example.org/a_(b) \"Map\") ![pic](p.png) and [ref][r].\n\n[r]: http://example.org", [(P, 0, "See the map and ref.")]),
    ("autolinks", "Mail <someone@example.org> or <https://example.org/x>.", [(P, 0, "Mail someone@example.org or https://example.org/x.")]),
    ("html entities and inline tags", "Fish &amp; chips<br>for <b>two</b>", [(P, 0, "Fish & chips for two")]),
    ("fenced code dropped", "Before.\n\n~~~\nSECRET\n~~~\n\nAfter.", [(P, 0, "Before."), (P, 0, "After.")]),
    ("longer fence closes only on its own kind", "````\n```\nSECRET\n```\n````\nAfter.", [(P, 0, "After.")]),
    ("indented code dropped", "Before.\n\n    SECRET = 1\n    MORE = 2\n\nAfter.", [(P, 0, "Before."), (P, 0, "After.")]),
    ("raw script block dropped", "<script>\nSECRET()\n</script>\n\nText.", [(P, 0, "Text.")]),
    ("multi-line comment dropped", "Keep <!-- SECRET\nSECRET -->this.", [(P, 0, "Keep this.")]),
    ("ordered with parenthesis", "1) one\n2) two", [(I, 1, "one"), (I, 1, "two")]),
    ("task list boxes", "- [x] done\n- [ ] open", [(I, 1, "done"), (I, 1, "open")]),
    ("loose list with continuation paragraph", "- first\n\n  more on first\n- second\n\nAfter.", [(I, 1, "first more on first"), (I, 1, "second"), (P, 0, "After.")]),
    ("lazy continuation joins the item", "- first line\ncontinues here", [(I, 1, "first line continues here")]),
    ("ordered item other than 1 cannot interrupt a paragraph", "We counted\n2. not a list", [(P, 0, "We counted 2. not a list")]),
    ("bullet interrupts a paragraph", "Tasks:\n- dig", [(P, 0, "Tasks:"), (I, 1, "dig")]),
    ("thematic break", "One.\n\n* * *\n\nTwo.", [(P, 0, "One."), (P, 0, "Two.")]),
    ("footnotes", "Fact[^1].\n\n[^1]: Source note.", [(P, 0, "Fact."), (P, 0, "Source note.")]),
    ("table without outer pipes, empty cell", "a | b\n--|--\n1 |\n", [(P, 0, "a; b"), (P, 0, "1")]),
    ("toml front matter", "+++\ntitle = 'x'\n+++\nBody.", [(P, 0, "Body.")]),
    ("nested quote", "> > deep quote", [(P, 0, "deep quote")]),
]


@pytest.mark.parametrize("text, expected", [c[1:] for c in MD_CASES], ids=[c[0] for c in MD_CASES])
def test_markdown_rules(text, expected):
    assert shape(parse_text(text, "md")) == expected


HTML_CASES = [
    ("fragment without body", "<p>Just a fragment.</p>", [(P, 0, "Just a fragment.")]),
    ("body used when no main or article", "<body><div>Loose.</div><p>Para.</p></body>", [(P, 0, "Loose."), (P, 0, "Para.")]),
    ("article preferred over the rest", "<body><div>OUTSIDE</div><article><p>In one.</p></article><article><p>In two.</p></article></body>", [(P, 0, "In one."), (P, 0, "In two.")]),
    ("main preferred over article elsewhere", "<body><article><p>Side.</p></article><main><p>Main text.</p></main></body>", [(P, 0, "Main text.")]),
    ("role=main", "<body><p>OUT</p><div role='main'><p>In.</p></div></body>", [(P, 0, "In.")]),
    ("page header dropped, article header kept", "<body><header>SITE</header><article><header><h2>Title</h2></header><p>Body.</p></article></body>", [(H, 2, "Title"), (P, 0, "Body.")]),
    ("hidden header inside article dropped", "<article><header hidden>GONE</header><p>Kept.</p></article>", [(P, 0, "Kept.")]),
    ("empty main falls back to body", "<body><main><script>x()</script></main><p>Outside.</p></body>", [(P, 0, "Outside.")]),
    ("navigation roles dropped", "<div role='navigation'>MENU</div><div role='contentinfo'>FOOT</div><p>Text.</p>", [(P, 0, "Text.")]),
    ("visibility hidden style", "<p style='visibility:hidden'>GONE</p><p>Seen.</p>", [(P, 0, "Seen.")]),
    ("list depth by nesting", "<ol><li>a<ul><li>b<ul><li>c</li></ul></li></ul></li><li>d</li></ol>", [(I, 1, "a"), (I, 2, "b"), (I, 3, "c"), (I, 1, "d")]),
    ("inline elements do not add spaces", "<p>bumble<b>bee</b>s and <a href='#'>links</a></p>", [(P, 0, "bumblebees and links")]),
    ("entities", "<p>&lt;tag&gt; caf&eacute; &#8364;5 &amp;c</p>", [(P, 0, "<tag> caf\u00e9 \u20ac5 &c")]),
    ("layout table read like divs", "<table><tr><td><p>One.</p><p>Two.</p></td><td><h3>Side</h3></td></tr></table>", [(P, 0, "One."), (P, 0, "Two."), (H, 3, "Side")]),
    ("data table rows with thead and hidden cell", "<table><thead><tr><th>A</th><th hidden>X</th><th>B</th></tr></thead><tbody><tr><td>1</td><td>2</td><td>3</td></tr></tbody></table>", [(P, 0, "A; B"), (P, 0, "1; 2; 3")]),
    ("pre without code kept", "<pre>Line one\n   line two</pre>", [(P, 0, "Line one line two")]),
    ("heading with br", "<h1>Top<br>Line</h1>", [(H, 1, "Top Line")]),
    ("dl and blockquote", "<blockquote>Quoted.</blockquote><dl><dt>Term</dt><dd>Meaning.</dd></dl>", [(P, 0, "Quoted."), (P, 0, "Term"), (P, 0, "Meaning.")]),
]


@pytest.mark.parametrize("text, expected", [c[1:] for c in HTML_CASES], ids=[c[0] for c in HTML_CASES])
def test_html_rules(text, expected):
    assert shape(parse_text(text, "html")) == expected


def test_html_declared_legacy_charset_is_used(tmp_path):
    page = '<html><head><meta charset="windows-1252"></head><body><p>Caf\u00e9 \u2014 \u20ac3</p></body></html>'
    path = tmp_path / "legacy.htm"
    path.write_bytes(page.encode("cp1252"))
    doc = read_document(path)
    assert doc.text == "Caf\u00e9 \u2014 \u20ac3"
    assert doc.encoding == "cp1252"


# --------------------------------------------------------------------------------------------
# Dispatch by extension
# --------------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "filename, content, fmt",
    [
        ("a.txt", "Plain.", "txt"),
        ("a.TEXT", "Plain.", "txt"),
        ("README", "Plain.", "txt"),
        ("a.md", "# Head", "md"),
        ("a.Markdown", "# Head", "md"),
        ("a.HTML", "<h1>Head</h1>", "html"),
        ("a.htm", "<h1>Head</h1>", "html"),
    ],
)
def test_dispatch_by_extension(tmp_path, filename, content, fmt):
    path = tmp_path / filename
    path.write_text(content, encoding="utf-8")
    doc = read_document(str(path))
    assert doc.format == fmt
    assert doc.source == str(path)


def test_md_file_read_as_plain_text_keeps_markup_but_md_strips_it(tmp_path):
    (tmp_path / "a.txt").write_text("Some **bold** words.", encoding="utf-8")
    (tmp_path / "a.md").write_text("Some **bold** words.", encoding="utf-8")
    assert read_document(tmp_path / "a.txt").text == "Some **bold** words."
    assert read_document(tmp_path / "a.md").text == "Some bold words."


def _demo_of(suffix: str, tmp_path: Path) -> Path:
    found = [path for path in sorted(DEMO.glob(f"*{suffix}")) if path.stem != "README"]
    if not found:
        pytest.skip(f"no {suffix} document in {DEMO}")
    return found[0]


def _pdf_of(suffix: str, tmp_path: Path) -> Path:
    path = tmp_path / f"gauge{suffix}"
    path.write_bytes(make_pdf([GAUGE_NOTE, [(11, "the gauge was read again on the next visit.")]], gap_after=({0},)))
    return path


def _docx_of(suffix: str, tmp_path: Path) -> Path:
    return make_docx(tmp_path / f"orchard{suffix}")


@pytest.mark.parametrize(
    "suffix, make",
    [(".txt", _demo_of), (".md", _demo_of), (".html", _demo_of), (".pdf", _pdf_of), (".docx", _docx_of)],
)
def test_bytes_in_memory_read_like_the_file_on_disk(tmp_path, suffix, make):
    path = make(suffix, tmp_path)
    on_disk = read_document(path)
    in_memory = reading.read(path.read_bytes(), name=str(path))
    assert in_memory == on_disk == reading.read(path)
    assert (in_memory.format, in_memory.source) == (reading.EXTENSIONS[suffix], str(path))
    assert reading.read(path.read_bytes(), in_memory.format).blocks == on_disk.blocks


# --------------------------------------------------------------------------------------------
# Decoding
# --------------------------------------------------------------------------------------------

SAMPLE = "Caf\u00e9 na\u00efve \u2014 \u20ac5"


@pytest.mark.parametrize(
    "data, text, encoding",
    [
        (SAMPLE.encode("utf-8"), SAMPLE, "utf-8"),
        (SAMPLE.encode("utf-8-sig"), SAMPLE, "utf-8-sig"),
        (SAMPLE.encode("utf-16"), SAMPLE, "utf-16"),
        (b"\xfe\xff" + SAMPLE.encode("utf-16-be"), SAMPLE, "utf-16"),
        (SAMPLE.encode("utf-32"), SAMPLE, "utf-32"),
        (b"\x00\x00\xfe\xff" + SAMPLE.encode("utf-32-be"), SAMPLE, "utf-32"),
        ("Gr\u00fc\u00dfe aus K\u00f6ln, sch\u00f6ne Stra\u00dfe.".encode("latin-1"), "Gr\u00fc\u00dfe aus K\u00f6ln, sch\u00f6ne Stra\u00dfe.", "cp1252"),
        ((DATA / "cp1252.txt").read_bytes(), (DATA / "cp1252.txt").read_bytes().decode("cp1252"), "cp1252"),
        ("\u041f\u0440\u0438\u0432\u0435\u0442, \u043a\u0430\u043a \u0434\u0435\u043b\u0430? \u042d\u0442\u043e \u0442\u0435\u0441\u0442\u043e\u0432\u044b\u0439 \u0434\u043e\u043a\u0443\u043c\u0435\u043d\u0442.".encode("cp1251"), "\u041f\u0440\u0438\u0432\u0435\u0442, \u043a\u0430\u043a \u0434\u0435\u043b\u0430? \u042d\u0442\u043e \u0442\u0435\u0441\u0442\u043e\u0432\u044b\u0439 \u0434\u043e\u043a\u0443\u043c\u0435\u043d\u0442.", "cp1251"),
        (b"", "", "utf-8"),
    ],
    ids=["utf-8", "utf-8-bom", "utf-16-le-bom", "utf-16-be-bom", "utf-32-le-bom", "utf-32-be-bom", "latin-1", "cp1252-fixture", "cp1251", "empty"],
)
def test_decode_bytes(data, text, encoding):
    assert decode_bytes(data) == (text, encoding)


@pytest.mark.parametrize(
    "data",
    [
        b"PK\x03\x04\x00\x00binary zip header",
        b"plain start then a NUL\x00 byte",
        bytes(range(1, 9)) * 200,
        b"\x1b\x02\x03\x04text" * 100,
    ],
    ids=["zip-header", "nul-byte", "control-run", "control-mixed"],
)
def test_decode_bytes_refuses_binary(data):
    with pytest.raises(ReadError, match="looks like a binary file"):
        decode_bytes(data)


def test_decode_bytes_refuses_a_lying_bom():
    with pytest.raises(ReadError, match="byte-order mark"):
        decode_bytes(b"\xef\xbb\xbfok \xff\xfe\xfd broken")


# --------------------------------------------------------------------------------------------
# Every error path: ReadError, one line, names the file and the problem
# --------------------------------------------------------------------------------------------


def _write(name: str, data: bytes):
    def build(tmp_path: Path, monkeypatch) -> Path:
        path = tmp_path / name
        path.write_bytes(data)
        return path

    return build


def _missing(tmp_path, monkeypatch):
    return tmp_path / "nowhere.txt"


def _directory(tmp_path, monkeypatch):
    folder = tmp_path / "folder.txt"
    folder.mkdir()
    return folder


def _too_large(tmp_path, monkeypatch):
    monkeypatch.setattr(reading, "MAX_BYTES", 10)
    path = tmp_path / "big.txt"
    path.write_text("This file is longer than ten bytes.", encoding="utf-8")
    return path


def _permission(tmp_path, monkeypatch):
    path = tmp_path / "locked.txt"
    path.write_text("Secret.", encoding="utf-8")

    def refuse(*args, **kwargs):
        raise PermissionError(13, "Permission denied")

    monkeypatch.setattr(entry, "open", refuse, raising=False)
    return path


def _undecodable(tmp_path, monkeypatch):
    monkeypatch.setattr(decode, "_guess_encoding", lambda data: None)
    path = tmp_path / "odd.txt"
    path.write_bytes(b"caf\xe9 \xff\xfe menu")
    return path


def _encrypted_pdf(tmp_path, monkeypatch):
    from pypdf import PdfWriter

    writer = PdfWriter()
    writer.add_blank_page(200, 200)
    writer.encrypt("secret", algorithm="RC4-128")
    path = tmp_path / "locked.pdf"
    with open(path, "wb") as fh:
        writer.write(fh)
    return path


def _scanned_pdf(tmp_path, monkeypatch):
    from pypdf import PdfWriter

    writer = PdfWriter()
    writer.add_blank_page(200, 200)
    path = tmp_path / "scan.pdf"
    with open(path, "wb") as fh:
        writer.write(fh)
    return path


def _truncated_pdf(tmp_path, monkeypatch):
    data = make_pdf([GAUGE_NOTE])
    path = tmp_path / "cut.pdf"
    path.write_bytes(data[: len(data) // 2])
    return path


def _zip_not_docx(tmp_path, monkeypatch):
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w") as archive:
        archive.writestr("notes.txt", "not a word document")
    path = tmp_path / "fake.docx"
    path.write_bytes(buffer.getvalue())
    return path


def _empty_docx(tmp_path, monkeypatch):
    import docx

    path = tmp_path / "blank.docx"
    docx.Document().save(path)
    return path


ERROR_CASES = [
    ("missing", _missing, "was not found"),
    ("directory", _directory, "is a directory"),
    ("empty", _write("empty.txt", b""), "is empty"),
    ("whitespace only", _write("blank.md", b" \n\t\r\n  \n"), "is empty"),
    ("whitespace only utf-16", _write("blank16.txt", "  \n\n ".encode("utf-16")), "is empty"),
    ("binary with NUL", _write("data.txt", b"GIF89a\x01\x00\x01\x00\x00\xff"), "looks like a binary file"),
    ("binary control characters", _write("data.md", bytes(range(1, 9)) * 50), "looks like a binary file"),
    ("unsupported extension", _write("report.rtf", b"{\\rtf1 hello}"), "unsupported file type '.rtf'"),
    ("legacy word file", _write("report.doc", b"hello"), "save it as .docx"),
    ("too large", _too_large, "too large"),
    ("permission denied", _permission, "permission denied"),
    ("undecodable", _undecodable, "re-save it as UTF-8"),
    ("only script html", _write("script.html", b"<html><body><script>x()</script><nav>Menu</nav></body></html>"), "contains no readable text"),
    ("only code markdown", _write("code.md", b"```\nprint(1)\n```\n"), "contains no readable text"),
    ("pdf without header", _write("fake.pdf", b"this is not a pdf at all"), "not a valid PDF"),
    ("corrupt pdf", _write("broken.pdf", b"%PDF-1.4\n1 0 obj << /Type /Catalog >> garbage"), "damaged or not a valid PDF"),
    ("truncated pdf", _truncated_pdf, "PDF"),
    ("scanned pdf", _scanned_pdf, "has no extractable text (scanned image?)"),
    ("encrypted pdf", _encrypted_pdf, "password-protected"),
    ("corrupt docx", _write("broken.docx", b"PK\x03\x04 this zip is broken"), "not a valid DOCX"),
    ("docx not a zip", _write("plain.docx", b"just some text"), "not a valid DOCX"),
    ("zip that is not a docx", _zip_not_docx, "not a valid DOCX"),
    ("empty docx", _empty_docx, "contains no text"),
]


@pytest.mark.parametrize("build, needle", [c[1:] for c in ERROR_CASES], ids=[c[0] for c in ERROR_CASES])
def test_read_errors_are_one_clear_line(tmp_path, monkeypatch, build, needle):
    path = build(tmp_path, monkeypatch)
    with pytest.raises(ReadError) as caught:
        read_document(path)
    message = str(caught.value)
    assert needle in message
    assert "\n" not in message
    assert path.name in message
    assert caught.value.__cause__ is None or isinstance(caught.value.__cause__, ReadError)
    assert isinstance(caught.value, ValueError)


def test_unsupported_extension_lists_the_supported_ones(tmp_path):
    path = tmp_path / "photo.jpg"
    path.write_bytes(b"\xff\xd8\xff")
    with pytest.raises(ReadError) as caught:
        read_document(path)
    for ext in (".txt", ".md", ".html", ".pdf", ".docx"):
        assert ext in str(caught.value)


@pytest.mark.parametrize(
    "args, needle",
    [
        (("",), "is empty"),
        (("   \n\n\t",), "is empty"),
        (("<script>x()</script>", "html"), "contains no readable text"),
        (("text", "pdf"), "cannot parse format 'pdf'"),
        (("text", "markdown"), "use 'txt', 'md' or 'html'"),
        ((b"bytes",), "needs a str"),
    ],
)
def test_parse_text_errors(args, needle):
    with pytest.raises(ReadError, match=needle):
        parse_text(*args)


def test_parse_text_names_its_source_in_errors():
    with pytest.raises(ReadError, match="'clipboard' is empty"):
        parse_text(" ", "txt", source="clipboard")
    assert parse_text("Hello there.", source=Path("x.txt")).source == "x.txt"


# --------------------------------------------------------------------------------------------
# Result types
# --------------------------------------------------------------------------------------------


def test_document_text_word_count_and_sections():
    doc = parse_text("Preface line.\n\n# One\n\nAlpha beta.\n\n- gamma delta\n\n## Two\n\n# Three\n\nEnd.", "md")
    assert doc.text == "Preface line.\n\nOne\n\nAlpha beta.\n\ngamma delta\n\nTwo\n\nThree\n\nEnd."
    assert doc.word_count == len(doc.text.split()) == 10
    sections = doc.sections()
    assert [(h.text if h else None, [b.text for b in body]) for h, body in sections] == [
        (None, ["Preface line."]),
        ("One", ["Alpha beta.", "gamma delta"]),
        ("Two", []),
        ("Three", ["End."]),
    ]


def test_sections_without_preface():
    doc = parse_text("# Only\n\nText.", "md")
    assert doc.sections() == [(Block("heading", "Only", 1), [Block("paragraph", "Text.")])]


def test_word_count_matches_wc_w_on_the_fixtures():
    for name in ("notes.txt", "guide.md", "page.html"):
        doc = read_document(DATA / name)
        assert doc.word_count == sum(len(b.text.split()) for b in doc.blocks)


def test_results_are_frozen_and_hashable():
    doc = parse_text("Hello there.")
    with pytest.raises(AttributeError):
        doc.format = "md"  # type: ignore[misc]
    with pytest.raises(AttributeError):
        doc.blocks[0].text = "x"  # type: ignore[misc]
    assert hash(doc) == hash(parse_text("Hello there."))
    assert Document([Block("paragraph", "x")]).blocks == (Block("paragraph", "x"),)


@pytest.mark.parametrize(
    "kind, text, level, needle",
    [
        ("title", "x", 1, "kind 'title' is unknown"),
        ("heading", "x", 0, "heading level 0"),
        ("heading", "x", 7, "heading level 7"),
        ("item", "x", 0, "item level 0"),
        ("paragraph", "x", 2, "paragraph level must be 0"),
        ("paragraph", None, 0, "must be a str"),
    ],
)
def test_block_validation(kind, text, level, needle):
    with pytest.raises(ValueError, match=needle):
        Block(kind, text, level)


def test_document_rejects_unknown_format():
    with pytest.raises(ValueError, match="format 'rtf' is unknown"):
        Document((), format="rtf")


# --------------------------------------------------------------------------------------------
# looks_english
# --------------------------------------------------------------------------------------------

ENGLISH = (
    "The committee met on Tuesday to review the annual report on water quality. The results were "
    "good, despite the dry summer. This year, demand rose in the northern villages, and the chair "
    "asked for a study of the leaks in the old network before the next meeting."
)
LANGUAGE_CASES = [
    ("english", ENGLISH, True),
    ("english fixture", None, True),
    (
        "french",
        "Le conseil municipal a examin\u00e9 le rapport annuel sur la qualit\u00e9 de l'eau. Les r\u00e9sultats sont "
        "bons, malgr\u00e9 la s\u00e9cheresse de l'\u00e9t\u00e9. Cette ann\u00e9e, la consommation a augment\u00e9 dans les "
        "villages du nord, et le maire a demand\u00e9 une \u00e9tude sur les fuites dans le r\u00e9seau ancien.",
        False,
    ),
    (
        "german",
        "Der Gemeinderat hat den Jahresbericht \u00fcber die Wasserqualit\u00e4t gepr\u00fcft. Die Ergebnisse sind gut, "
        "trotz der Trockenheit im Sommer. In diesem Jahr ist der Verbrauch in den D\u00f6rfern im Norden "
        "gestiegen, und der B\u00fcrgermeister hat eine Studie \u00fcber die Lecks im alten Netz verlangt.",
        False,
    ),
    (
        "spanish",
        "El consejo municipal examin\u00f3 el informe anual sobre la calidad del agua. Los resultados son "
        "buenos, a pesar de la sequ\u00eda del verano. Este a\u00f1o el consumo aument\u00f3 en los pueblos del "
        "norte, y el alcalde pidi\u00f3 un estudio sobre las fugas en la red antigua.",
        False,
    ),
    ("too short to judge", "Bonjour tout le monde", True),
    ("numbers only", "12 34 56 78 " * 50, True),
]


@pytest.mark.parametrize("text, expected", [c[1:] for c in LANGUAGE_CASES], ids=[c[0] for c in LANGUAGE_CASES])
def test_looks_english(text, expected):
    if text is None:
        text = read_document(DATA / "notes.txt").text
    assert looks_english(text) is expected


def test_looks_english_only_reads_the_first_tokens():
    french = LANGUAGE_CASES[2][1]
    assert looks_english(ENGLISH * 80 + french * 200) is True
    assert looks_english(french * 200 + ENGLISH * 80) is False


# --------------------------------------------------------------------------------------------
# Properties: any text either parses into clean blocks or raises ReadError
# --------------------------------------------------------------------------------------------

MARKUP_TOKENS = list("ab Z1.\n\n#*-_`[]()|>!<=:~\t\u2022\u00ad") + [
    "<p>", "</p>", "<li>", "<ul>", "</ul>", "<!--", "-->", "```", "&amp;", "<script>", "<br>",
    "<table><tr><td>", "<main>", "---\n", "    ", "1. ", "- ", "Word ", "WORD ",
]
MARKUPISH = st.lists(st.sampled_from(MARKUP_TOKENS), max_size=80).map("".join)


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(text=st.one_of(st.text(max_size=200), MARKUPISH), fmt=st.sampled_from(["txt", "md", "html"]))
def test_any_text_gives_clean_blocks_or_read_error(text, fmt):
    try:
        doc = parse_text(text, fmt)
    except ReadError as exc:
        assert "\n" not in str(exc)
        return
    assert doc.blocks
    for block in doc.blocks:
        assert block.text and block.text == " ".join(block.text.split())
        assert "\x00" not in block.text
    assert doc.word_count == len(doc.text.split())


# --------------------------------------------------------------------------------------------
# The demo documents shipped with the project read cleanly (skipped when absent)
# --------------------------------------------------------------------------------------------


@pytest.mark.parametrize("name", ["board_minutes_march.txt", "drought_brief.md", "customer_complaints_review.html"])
def test_demo_documents_read_cleanly(name):
    path = DEMO / name
    if not path.exists():
        pytest.skip(f"{path} is absent")
    doc = read_document(path)
    assert doc.word_count > 200
    assert looks_english(doc.text)
    assert any(b.kind == "heading" for b in doc.blocks)
    assert "<" not in doc.text and "{" not in doc.text
