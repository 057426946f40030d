"""The archive stage: one deterministic, self-checking ``.tar.gz`` of a finished project (outputs,
their inputs, the manifest, the dossier folder, a SHA-256 list and the environment), and its
verification. It owns the archive layout (common.py), writing (write.py: only the project's regular
files inside the project folder, the dossier built or reused, SHA256SUMS and environment.json),
verification (verify.py: checksums, sources, optionally a rebuild whose dossier.json is compared
with the packed one) and optional OpenSSH signatures (sign.py: ``ssh-keygen -Y sign/verify``). It
is the last stage of the flow and may import every earlier one (vocabulary, reading, project,
analysis, report), never the commands.
"""
