#!/usr/bin/env bash
# Validates every document of deploy/k8s/thermosieve.yaml offline:
#  - Kubernetes kinds against the Kubernetes JSON schemas bundled in kubernetes-validate, in its
#    strict variant (unknown fields are errors, as with kubectl's default field validation), for
#    each version in K8S_VERSIONS (default "1.30 1.37");
#  - KEDA kinds (keda.sh/v1alpha1 ScaledObject, TriggerAuthentication, ...) against KEDA 2.16.1's
#    CRD schemas, as carried by cloudcoil-models-keda (pydantic models generated from the CRDs):
#    the script turns them into JSON schemas, with unknown fields and nulls refused;
#  - references inside the file: Secrets/ConfigMaps and their keys named by volumes, env and
#    TriggerAuthentication, env values pointing at files of mounted Secrets, named probe ports,
#    Service and ScaledObject targets, TLS Secret keys, and that every Secret is a labelled
#    placeholder (thermosieve/placeholder: "true", every value containing REPLACE-ME).
# Exits non-zero on any failure. Needs python3 with venv and, the first time only (or when
# scripts/requirements-manifests.txt changes), the registry for pip; no network after that.
# Usage: scripts/check_manifests.sh [FILE...]     (default: deploy/k8s/thermosieve.yaml)
set -euo pipefail
FILES=()
for f in "$@"; do FILES+=("$(realpath -- "$f")"); done
cd "$(dirname "$0")/.."
ROOT=$(pwd)
[ ${#FILES[@]} -gt 0 ] || FILES=("$ROOT/deploy/k8s/thermosieve.yaml")

VENV=$ROOT/.venv-manifests
REQ=scripts/requirements-manifests.txt
if [ ! -x "$VENV/bin/python" ]; then
    python3 -m venv "$VENV"
fi
want=$(sha256sum "$REQ" | cut -d' ' -f1)
if [ "$(cat "$VENV/.requirements.sha256" 2>/dev/null || true)" != "$want" ]; then
    "$VENV/bin/pip" install -q --disable-pip-version-check -r "$REQ"
    echo "$want" >"$VENV/.requirements.sha256"
fi

K8S_VERSIONS=${K8S_VERSIONS:-"1.30 1.37"} "$VENV/bin/python" - "${FILES[@]}" <<'PY'
import os
import sys

import jsonschema
import yaml
from cloudcoil.models.keda import v1alpha1 as keda
from kubernetes_validate import utils as kv

K8S_VERSIONS = os.environ["K8S_VERSIONS"].split()
KEDA_MODELS = {m.__name__: m for m in (keda.ScaledObject, keda.TriggerAuthentication,
                                       keda.ScaledJob, keda.ClusterTriggerAuthentication)}
NOT_SCHEMA = ("default", "const", "enum", "examples")


def tighten(node):
    """A CRD schema refuses null for optional fields and the API drops unknown fields
    (kubectl refuses them): pydantic's schema allows both, so take them out."""
    if isinstance(node, list):
        return [tighten(n) for n in node]
    if not isinstance(node, dict):
        return node
    out = {}
    for k, v in node.items():
        if k in ("properties", "$defs", "patternProperties"):
            out[k] = {name: tighten(s) for name, s in v.items()}
        elif k in NOT_SCHEMA:
            out[k] = v
        else:
            out[k] = tighten(v)
    alts = out.get("anyOf")
    if isinstance(alts, list) and {"type": "null"} in alts:
        rest = [a for a in alts if a != {"type": "null"}]
        del out["anyOf"]
        if out.get("default", 0) is None:
            del out["default"]
        if len(rest) == 1:
            out.update(rest[0])
        else:
            out["anyOf"] = rest
    if out.get("properties") and "additionalProperties" not in out:
        out["additionalProperties"] = False
    return out


def keda_validator(kind):
    schema = tighten(KEDA_MODELS[kind].model_json_schema(by_alias=True, mode="validation"))
    schema["required"] = sorted(set(schema.get("required", [])) | {"apiVersion", "kind", "metadata"})
    return jsonschema.Draft202012Validator(schema)


def where(err):
    return ".".join(str(p) for p in err.absolute_path) or "(top)"


def schema_errors(doc):
    """(errors, what was checked) of one document against its schemas."""
    api, kind = doc.get("apiVersion", ""), doc.get("kind", "")
    if api.startswith("keda.sh/"):
        if api != "keda.sh/v1alpha1" or kind not in KEDA_MODELS:
            return [f"no KEDA schema for {api} {kind}"], ""
        errs = sorted(keda_validator(kind).iter_errors(doc), key=lambda e: list(e.absolute_path))
        return [f"{where(e)}: {e.message}" for e in errs], "KEDA 2.16.1 CRD"
    errors = []
    for v in K8S_VERSIONS:
        try:
            kv.validate(doc, v, strict=True)
        except kv.ValidationError as e:
            errors.append(f"k8s {v}: {where(e)}: {e.message}")
        except kv.SchemaNotFoundError as e:
            errors.append(e.message)
    return errors, "k8s " + ", ".join(K8S_VERSIONS) + " strict"


def pod_specs(doc):
    spec = doc.get("spec") or {}
    kind = doc.get("kind")
    if kind in ("Deployment", "StatefulSet", "DaemonSet", "ReplicaSet", "Job"):
        return [((spec.get("template") or {}).get("metadata") or {}, (spec.get("template") or {}).get("spec") or {})]
    if kind == "CronJob":
        t = ((spec.get("jobTemplate") or {}).get("spec") or {}).get("template") or {}
        return [(t.get("metadata") or {}, t.get("spec") or {})]
    if kind == "Pod":
        return [(doc.get("metadata") or {}, spec)]
    return []


def reference_errors(docs):
    """Problems the schemas cannot see: names and keys that point nowhere."""
    byname, errors = {}, []
    for d in docs:
        key = (d.get("kind"), (d.get("metadata") or {}).get("name"))
        if key in byname:
            errors.append((d, f"duplicate {key[0]}/{key[1]}"))
        byname[key] = d

    def keys_of(kind, name):
        d = byname.get((kind, name))
        return None if d is None else set(d.get("data") or {}) | set(d.get("stringData") or {})

    for d in docs:
        kind, meta = d.get("kind"), d.get("metadata") or {}
        if kind == "Secret":
            if (meta.get("labels") or {}).get("thermosieve/placeholder") != "true":
                errors.append((d, 'Secret without label thermosieve/placeholder: "true"'))
            for k, v in (d.get("stringData") or {}).items():
                if "REPLACE-ME" not in str(v):
                    errors.append((d, f"stringData.{k} is not a REPLACE-ME placeholder"))
            if d.get("data"):
                errors.append((d, "data given: placeholders belong in stringData"))
            if d.get("type") == "kubernetes.io/tls":
                for k in {"tls.crt", "tls.key"} - keys_of("Secret", meta.get("name")):
                    errors.append((d, f"kubernetes.io/tls Secret without {k}"))
        for pmeta, pspec in pod_specs(d):
            vols = {v.get("name"): v for v in pspec.get("volumes") or []}
            for v in vols.values():
                if "secret" in v:
                    sec = v["secret"]
                    have = keys_of("Secret", sec.get("secretName"))
                    if have is None:
                        if not sec.get("optional"):
                            errors.append((d, f"volume {v['name']}: no Secret {sec.get('secretName')} in the file"))
                        continue
                    for it in sec.get("items") or []:
                        if it.get("key") not in have:
                            errors.append((d, f"volume {v['name']}: Secret {sec['secretName']} has no key {it.get('key')}"))
            for c in (pspec.get("containers") or []) + (pspec.get("initContainers") or []):
                cname = c.get("name")
                mounts = {}
                for m in c.get("volumeMounts") or []:
                    if m.get("name") not in vols:
                        errors.append((d, f"container {cname}: mount of unknown volume {m.get('name')}"))
                    elif "secret" in vols[m["name"]] and not m.get("subPath"):
                        sec = vols[m["name"]]["secret"]
                        files = {it.get("path") for it in sec.get("items") or []} or keys_of("Secret", sec.get("secretName")) or set()
                        mounts[m["mountPath"].rstrip("/")] = (sec.get("secretName"), files)
                        if not m.get("readOnly"):
                            errors.append((d, f"container {cname}: Secret volume {m['name']} not mounted readOnly"))
                for e in c.get("env") or []:
                    ref = (e.get("valueFrom") or {}).get("secretKeyRef") or (e.get("valueFrom") or {}).get("configMapKeyRef")
                    if ref:
                        rkind = "Secret" if "secretKeyRef" in e["valueFrom"] else "ConfigMap"
                        have = keys_of(rkind, ref.get("name"))
                        if not ref.get("optional") and (have is None or ref.get("key") not in have):
                            errors.append((d, f"container {cname}: env {e.get('name')}: no key {ref.get('key')} in {rkind} {ref.get('name')}"))
                    val = e.get("value")
                    if isinstance(val, str) and val.startswith("/"):
                        for mp, (sname, files) in mounts.items():
                            if val.startswith(mp + "/") and val[len(mp) + 1:] not in files:
                                errors.append((d, f"container {cname}: env {e.get('name')}={val}: Secret {sname} mounted at {mp} has no such file"))
                for src in c.get("envFrom") or []:
                    for rkind, field in (("ConfigMap", "configMapRef"), ("Secret", "secretRef")):
                        ref = src.get(field)
                        if ref and not ref.get("optional") and keys_of(rkind, ref.get("name")) is None:
                            errors.append((d, f"container {cname}: envFrom: no {rkind} {ref.get('name')} in the file"))
                ports = {p.get("name") for p in c.get("ports") or [] if p.get("name")}
                for probe in ("readinessProbe", "livenessProbe", "startupProbe"):
                    for handler in (c.get(probe) or {}).values():
                        port = handler.get("port") if isinstance(handler, dict) else None
                        if isinstance(port, str) and port not in ports:
                            errors.append((d, f"container {cname}: {probe} names unknown port {port}"))
        if kind == "Service":
            sel = (d.get("spec") or {}).get("selector") or {}
            if sel and not any(sel.items() <= (pm.get("labels") or {}).items() for o in docs for pm, _ in pod_specs(o)):
                errors.append((d, f"selector {sel} matches no pod template in the file"))
        if kind == "ScaledObject":
            t = (d.get("spec") or {}).get("scaleTargetRef") or {}
            if (t.get("kind") or "Deployment", t.get("name")) not in byname:
                errors.append((d, f"scaleTargetRef {t.get('kind') or 'Deployment'}/{t.get('name')} not in the file"))
            for trig in (d.get("spec") or {}).get("triggers") or []:
                a = trig.get("authenticationRef")
                if a and (a.get("kind") or "TriggerAuthentication", a.get("name")) not in byname:
                    errors.append((d, f"authenticationRef {a.get('name')} not in the file"))
        if kind in ("TriggerAuthentication", "ClusterTriggerAuthentication"):
            for r in (d.get("spec") or {}).get("secretTargetRef") or []:
                have = keys_of("Secret", r.get("name"))
                if have is None or r.get("key") not in have:
                    errors.append((d, f"secretTargetRef {r.get('parameter')}: no key {r.get('key')} in Secret {r.get('name')}"))
    return errors


def label(d):
    return f"{d.get('kind')}/{(d.get('metadata') or {}).get('name')}"


passed = failed = 0
for path in sys.argv[1:]:
    try:
        with open(path) as f:
            docs = [d for d in yaml.safe_load_all(f) if d is not None]
    except (OSError, yaml.YAMLError) as e:
        print(f"FAIL {path}: cannot read YAML: {e}")
        failed += 1
        continue
    refs = {}
    for d, msg in reference_errors([d for d in docs if isinstance(d, dict)]):
        refs.setdefault(id(d), []).append(msg)
    for i, d in enumerate(docs):
        if not isinstance(d, dict) or not d.get("apiVersion") or not d.get("kind"):
            print(f"FAIL {path} document {i + 1}: not a Kubernetes object (apiVersion, kind)")
            failed += 1
            continue
        errors, what = schema_errors(d)
        errors += refs.get(id(d), [])
        if errors:
            failed += 1
            print(f"FAIL {label(d)} ({path}, document {i + 1})")
            for e in errors:
                print(f"     {e}")
        else:
            passed += 1
            print(f"ok   {label(d)} ({what})")
print(f"manifests: {passed} passed, {failed} failed")
sys.exit(1 if failed or not passed else 0)
PY
