"""Seeded generator for the templated part of the development corpus.

Writes marked-up source (the same ``{{LABEL|text}}`` format as the hand-written
notes) so that ``build.py`` treats both parts alike. The generator exists to add
volume and format variety (name orders, casing, date and phone formats, ids
without label words, addresses over several lines, look-alike traps); the
hand-written notes are the harder, less regular part. Template-only corpora
overstate recall, so report scores on the hand-written notes separately
(their headers carry ``origin=hand``; generated ones ``origin=gen``).

Everything is invented: phones 555-01xx, reserved e-mail domains, RFC 5737 IPs,
SSNs in the 9xx area, invented towns and institutions.
"""

from __future__ import annotations

import random
from datetime import date, timedelta

SEED = 20240611
N_PATIENTS = 36
NOTES_PER_PATIENT = (2, 3)

GIVEN = {
    "anglo": ["Harold", "Mabel", "Will", "Rose", "Hope", "Bill", "April", "June", "Grace", "Frank", "Dawn",
              "Faith", "Penny", "Ray", "Iris", "Clifford", "Loretta", "Wade", "Opal", "Lyle"],
    "vietnamese": ["Nguyen Van Binh", "Tran Thi Huong", "Le Minh Tuan", "Pham Thi Lan", "Vo Van Hai", "Do Thi Mai"],
    "nigerian": ["Chinedu", "Ngozi", "Oluwaseun", "Adaora", "Emeka", "Funmilayo", "Tunde", "Ifeoma"],
    "arabic": ["Omar", "Fatima", "Khalid", "Layla", "Yousef", "Huda", "Tariq", "Samira"],
    "spanish": ["José Luis", "María", "Guadalupe", "Alejandro", "Inés", "Rodrigo", "Pilar", "Xiomara"],
    "polish": ["Zbigniew", "Małgorzata", "Krzysztof", "Jadwiga", "Wojciech", "Bożena", "Tadeusz"],
    "indian": ["Venkatesh", "Lakshmi", "Arjun", "Deepika", "Harpreet", "Sunita", "Rakesh", "Meenakshi"],
    "chinese": ["Wang Lihua", "Zhang Wei", "Liu Yang", "Chen Jing", "Huang Min", "Zhou Hao"],
}
FAMILY = {
    "anglo": ["Long", "May", "Hale", "Marsh", "Quimby", "Pettigrew", "Ashby", "Hollowell", "Stroud", "Bright",
              "Fairweather", "Winter", "Baker", "Cook", "Young", "Brandish", "Tolliver", "Greaves"],
    "nigerian": ["Okonjo-Bassey", "Adeyemi", "Nwankwo", "Olaniyan", "Eze-Obi", "Akintola", "Obiora"],
    "arabic": ["Al-Hashimi", "Haddad", "Mansour", "El-Sayed", "Qureshi", "Nasrallah", "Bin Salem"],
    "spanish": ["García Olmedo", "Rivera", "Echeverría Luna", "Montalvo", "Sandoval Ruiz", "Peña"],
    "polish": ["Wiśniewski", "Zielińska", "Grabowski", "Dąbrowska", "Kaczmarek", "Pawlak"],
    "indian": ["Subramanian", "Reddy", "Chatterjee", "Sandhu", "Iyer", "Deshpande", "Gill"],
}
CLINICIANS = ["Miriam Achterberg", "Chidi Okonkwo", "Paul Brannigan", "Anand Varkey", "Solveig Lindqvist",
              "Elena Castellano", "Nkechi Eze", "Tomasz Wróbel", "Farah Al-Khatib", "Hope Arnaud",
              "Will Sutter", "Sean Foley", "Wei-Lin Zhou", "Gideon Pruett", "Priya Ramaswamy"]
NURSES = ["Tamsin Hollis", "Rhonda Gillespie", "Lucía Bermúdez", "Kwabena Owusu", "April Dunmore", "Marnie Vetch"]
PLACES = [  # facility, street, city, county, state, zip, area code
    ("Kestrel Bend Regional Medical Center", "1200 Osterby Pike", "Kestrel Bend", "Corvale County", "KY", "41906", "270"),
    ("Halverton Family Practice", "315 Grangeford Street", "Halverton", "Corvale County", "KY", "41903", "270"),
    ("Dunmarrow General Hospital", "900 Kinross Boulevard", "Dunmarrow", "Tamsin County", "OH", "45998", "740"),
    ("Vellacott Memorial Hospital", "22 Chantry Lane", "Vellacott", "Tamsin County", "OH", "45997", "937"),
    ("Saltmarsh Crossing Community Hospital", "5 Ferrier Road", "Saltmarsh Crossing", "Brackett County", "OH", "45996", "740"),
    ("Greyhaven Behavioral Health", "410 Lantern Hill", "Greyhaven", "Quill County", "KY", "41909", "606"),
]
STREETS = ["Tamsin Lane", "Wexley Ave", "Harrier Way", "Old Quarry Road", "Pellham Court", "Mill Race Road",
           "Birchmoor Close", "Fetterman Road", "Colliery Row", "Lantern Hill Dr", "Ravensmoor Dr", "Kiln Street"]
EMPLOYERS = [("Pellington Freight Lines", "dispatcher"), ("Quillmont Tool & Die", "machinist"),
             ("Osterby Mills", "loom technician"), ("Corvale County School District", "bus driver"),
             ("Brightcairn Studio", "illustrator"), ("Vellacott Paper Mill", "forklift operator"),
             ("Greenhaven Grounds LLC", "landscaper"), ("Marrowby Distribution Center", "warehouse associate"),
             ("Lotus Pearl Nails", "nail technician"), ("Halverton State College", "librarian")]
RELATIONS = ["spouse", "partner", "child", "sibling", "friend", "neighbour", "grandchild"]
# Look-alike sentences; the room/bed one carries FACILITY markup (rooms and beds are FACILITY).
TRAPS = ["BP 132/84, HR 76, T 36.9 C, SpO2 97% RA.", "GCS 14 (E4 V4 M6).", "Nodule at 7 o'clock, 2 cm FN.",
         "Tenderness over L4-L5 and the SI joint.", "Metoprolol 25 mg BID; atorvastatin 40 mg at 21:00.",
         "Dx codes: I10, E11.9, Z79.4.", "Hgb 10.9, WBC 7.2, plt 214, Na 138, K 4.1.",
         "PHQ-9 score 8; MoCA 24/30.", "Apgar 8/9.", "Last colonoscopy in 2015 was normal.",
         "Babinski sign absent; Romberg negative.", "Ventilator PEEP 5, FiO2 0.40, TV 450.",
         "Seen in {{FACILITY|Room 12}}, {{FACILITY|bed 2}}.", "Foley catheter removed at 06:00.", "Murphy's sign positive.",
         "CHA2DS2-VASc 3, HAS-BLED 2.", "Insulin glargine 18 units at 22:00.", "EF 45-50%."]
STYLES = ["progress", "nursing", "telephone", "ed", "discharge", "radiology", "referral"]


def _m(label: str, text: str) -> str:
    return f"{{{{{label}|{text}}}}}"


class Gen:
    """Holds the seeded random source and the per-patient cast."""

    def __init__(self, seed: int = SEED) -> None:
        self.r = random.Random(seed)

    def person(self) -> dict:
        r = self.r
        culture = r.choice(list(GIVEN))
        given = r.choice(GIVEN[culture])
        if culture in ("vietnamese", "chinese"):
            family, rest = given.split(" ", 1)
            full, last, first = given, family, rest
        else:
            last = r.choice(FAMILY.get(culture, FAMILY["anglo"]))
            full, first = f"{given} {last}", given
        return {"full": full, "first": first, "last": last, "culture": culture}

    def name(self, p: dict, lower: bool = False) -> str:
        r = self.r
        forms = [p["full"], f"{p['last']}, {p['first']}", f"{p['last'].upper()}, {p['first'].upper()}",
                 p["full"].lower(), f"{p['first'][0]}. {p['last']}", p["full"].upper()]
        text = r.choice(forms)
        return _m("NAME", text.lower() if lower else text)

    def date(self, d: date, with_year: bool = True) -> str:
        r = self.r
        months = ["January", "February", "March", "April", "May", "June", "July", "August", "September",
                  "October", "November", "December"]
        full, abbr = months[d.month - 1], months[d.month - 1][:3]
        forms = [f"{d.month}/{d.day}/{d.year}", f"{d.month:02d}/{d.day:02d}/{d.year}", d.isoformat(),
                 f"{full} {d.day}, {d.year}", f"{d.day} {abbr} {d.year}", f"{d.month:02d}/{d.day:02d}/{d.year % 100:02d}",
                 f"{d.day:02d}-{abbr.upper()}-{d.year}", f"{abbr} {d.day}, {d.year}", f"{d.year}{d.month:02d}{d.day:02d}",
                 f"{d.day}.{d.month}.{d.year}", f"{full} {d.day}{self._suffix(d.day)}, {d.year}"]
        short = [f"{d.month}/{d.day}", f"{abbr} {d.day}", f"{full} {d.day}{self._suffix(d.day)}"]
        return _m("DATE", r.choice(forms if with_year else short))

    @staticmethod
    def _suffix(day: int) -> str:
        if 10 <= day % 100 <= 20:
            return "th"
        return {1: "st", 2: "nd", 3: "rd"}.get(day % 10, "th")

    def phone(self, area: str) -> str:
        r = self.r
        n = f"01{r.randint(0, 99):02d}"
        forms = [f"({area}) 555-{n}", f"{area}-555-{n}", f"{area}.555.{n}", f"{area}555{n}", f"+1 {area} 555 {n}"]
        text = r.choice(forms)
        if r.random() < 0.15:
            text += f" ext. {r.randint(10, 999)}"
        return _m("PHONE", text)

    def patient(self, idx: int) -> dict:
        r = self.r
        p = self.person()
        place = r.choice(PLACES)
        rel_person = self.person()
        if p["culture"] not in ("vietnamese", "chinese"):
            # NOTE: a relative shares the family name and naming tradition (neutral relation words).
            given = r.choice(GIVEN[p["culture"]])
            rel_person = {"first": given, "full": f"{given} {p['last']}", "last": p["last"]}
        employer, job = r.choice(EMPLOYERS)
        p.update(
            pid=f"DV-P{100 + idx}", place=place, mrn=str(r.randint(1000000, 9999999)),
            street=f"{r.randint(2, 2999)} {r.choice(STREETS)}", rel=r.choice(RELATIONS), rel_person=rel_person,
            employer=employer, job=job, age=r.choice([r.randint(24, 88)] * 4 + [r.randint(90, 103)]),
            ssn=f"9{r.randint(0, 99):02d}-{r.randint(10, 99)}-{r.randint(1000, 9999)}",
            plan=f"BWH-{r.randint(100000000, 999999999)}", acct=str(r.randint(900000000, 999999999)),
            start=date(2014, 1, 1) + timedelta(days=r.randint(0, 3650)), clin=r.sample(CLINICIANS, 3),
        )
        return p

    def age(self, p: dict) -> str:
        return _m("AGE", str(p["age"])) if p["age"] >= 90 else str(p["age"])

    def body(self, p: dict, style: str, d: date, prev: date | None) -> str:
        r = self.r
        fac, street, city, county, state, zip_, area = p["place"]
        clin, clin2, _ = p["clin"]
        nurse = r.choice(NURSES)
        rel = p["rel_person"]
        rel_plain = r.choice([rel["first"], rel["full"]])
        rel_name = _m("NAME", rel_plain)
        trap = " ".join(r.sample(TRAPS, 2))
        sign = r.choice([f"{_m('NAME', clin)}, MD", f"-- {_m('NAME', clin.split()[0][0] + '. ' + clin.split()[-1])}",
                         f"Electronically signed by {_m('NAME', clin)} on {self.date(d)}"])
        prev_txt = f" Last seen {self.date(prev, with_year=r.random() < 0.5)}." if prev else ""
        age = self.age(p)
        if style == "progress":
            lines = [f"{_m('FACILITY', fac)} - Clinic visit", f"Date of service: {self.date(d)}",
                     f"Patient: {self.name(p)}   MRN: {_m('MRN', p['mrn'])}",
                     f"{age} y/o {p['culture'] == 'anglo' and 'pt' or 'patient'} seen for follow-up.{prev_txt}",
                     f"Works as a {_m('PROFESSION', p['job'])} at {_m('ORGANIZATION', p['employer'])}. {trap}",
                     f"Accompanied by {p['rel']} {rel_name}.", "Plan: continue current regimen, return 3 months.", sign]
        elif style == "nursing":
            lines = [f"{self.date(d, with_year=False)} {r.randint(0, 23):02d}{r.choice(['00', '15', '30', '45'])} "
                     f"pt {self.name(p, lower=True)} resting, a&o x{r.randint(1, 3)}. {trap}",
                     f"{p['rel']} {_m('NAME', rel_plain.lower()) if r.random() < 0.5 else rel_name} @ bs, updated. pain {r.randint(0, 8)}/10.",
                     f"call light in reach. {_m('NAME', nurse.split()[0].lower())} rn"]
        elif style == "telephone":
            lines = [f"Telephone encounter {self.date(d)}",
                     f"Caller: {rel_name} ({p['rel']}) at {self.phone(area)} re {self.name(p)}.",
                     f"Asked about results from {self.date(prev or d, with_year=False)}. {trap}",
                     f"Advised to keep appointment with Dr. {_m('NAME', clin2.split()[-1])}. {_m('NAME', nurse)}, RN"]
        elif style == "ed":
            lines = [f"EMERGENCY DEPARTMENT - {_m('FACILITY', fac.upper())}",
                     f"{self.name(p)}  {_m('MRN', p['mrn'])}  {age}{r.choice(['M', 'F'])}  {self.date(d)}",
                     f"Brought in by {p['rel']} ({rel_name}). {trap}",
                     f"Home: {_m('STREET', p['street'])}, {_m('CITY', city)}, {_m('STATE', state)} {_m('ZIP', zip_)}",
                     f"Contact {self.phone(area)}. SSN {_m('SSN', p['ssn'])}. Acct {_m('ACCOUNT', p['acct'])}.",
                     sign]
        elif style == "discharge":
            admit = d - timedelta(days=r.randint(2, 9))
            lines = ["DISCHARGE SUMMARY", f"{_m('FACILITY', fac)}",
                     f"Name: {self.name(p)}     MRN: {_m('MRN', p['mrn'])}     Age: {age}",
                     f"Admitted: {self.date(admit)}   Discharged: {self.date(d)}",
                     f"Address:\n{_m('STREET', p['street'])}\n{_m('CITY', city)}, {_m('COUNTY', county)}\n"
                     f"{_m('STATE', state)} {_m('ZIP', zip_)}",
                     f"Insurance member ID {_m('HEALTH_PLAN', p['plan'])}. {trap}",
                     f"Follow-up with {_m('NAME', clin2)} on {self.date(d + timedelta(days=r.randint(5, 20)), with_year=False)}.",
                     f"cc: {_m('NAME', clin2)}; fax {_m('FAX', f'{area}-555-01{r.randint(0, 99):02d}')}", sign]
        elif style == "radiology":
            lines = [f"{r.choice(['CT CHEST', 'MRI BRAIN', 'US ABDOMEN', 'XR KNEE 3 VIEWS'])}   {self.date(d)}",
                     f"{self.name(p)} | {_m('MRN', p['mrn'])} | {_m('ID_OTHER', f'ACC{r.randint(10000000, 99999999)}')}",
                     f"Comparison: {self.date(prev, with_year=True) if prev else 'none'}. {trap}",
                     "Impression: no acute abnormality.", f"Read by {_m('NAME', p['clin'][2])}, MD",
                     f"PACS node {_m('IP', f'203.0.113.{r.randint(1, 254)}')}"]
        else:  # referral
            lines = [f"{_m('FACILITY', fac)}", f"{_m('STREET', street)}", f"{_m('CITY', city)}, {_m('STATE', state)} {_m('ZIP', zip_)}",
                     f"{self.date(d)}", "", f"Dear Dr. {_m('NAME', clin2.split()[-1])},",
                     f"I am referring {self.name(p)} (DOB {self.date(p['dob'])}), {age}, {_m('PROFESSION', p['job'])}. {trap}",
                     f"Reach the patient at {self.phone(area)} or {_m('EMAIL', p['email'])}.", "", "Sincerely,",
                     f"{_m('NAME', clin)}, MD"]
        return "\n".join(lines)


def _ascii(text: str) -> str:
    table = str.maketrans("ąćęłńóśźżĄĆĘŁŃÓŚŹŻáéíóúñÁÉÍÓÚÑ", "acelnoszzACELNOSZZaeiounAEIOUN")
    return text.translate(table)


def render_source(seed: int = SEED) -> str:
    """The generated notes as marked-up source text (deterministic for a seed)."""
    g = Gen(seed)
    out = ["Generated by tests/corpora/dev/generate.py - do not edit; edit the generator instead.", ""]
    note_no = 1001
    for idx in range(N_PATIENTS):
        p = g.patient(idx)
        p["dob"] = p["start"] - timedelta(days=365 * p["age"] + g.r.randint(0, 364))
        p["email"] = f"{_ascii(p['first']).split()[0].lower()}.{_ascii(p['last']).split()[0].lower()}@example.com"
        d, prev = p["start"], None
        for _ in range(g.r.randint(*NOTES_PER_PATIENT)):
            style = g.r.choice(STYLES)
            out.append(f"@@ note_id=DV-{note_no} patient={p['pid']} date={d.isoformat()} style={style} origin=gen")
            out.append(g.body(p, style, d, prev))
            out.append("")
            note_no += 1
            prev, d = d, d + timedelta(days=g.r.randint(1, 120))
    return "\n".join(out)
