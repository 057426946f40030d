"""The archive stage: a finished dossier and everything it was made from (outputs, their inputs, the
manifest, the dossier folder, a SHA-256 list and the environment) packed into one byte-for-byte
reproducible archive, and the verification of such an archive (checksums; optionally a rebuild
whose dossier.json is compared with the packed one). It is the last stage of the flow and may
import every earlier one (vocabulary, reading, project, analysis, report), never the commands.
"""
