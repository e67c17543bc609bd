"""The bundled examples (jobs, field sessions, a batch template and its readings), shipped
with placer so that ``placer new example NAME`` can copy them into a folder."""
