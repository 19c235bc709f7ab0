import { afterAll, describe, expect, it } from "vitest";
import { hashPassword, verifyPassword } from "@/lib/auth/password";
import { listAuditEventsByActor, recordAuditEvent } from "@/lib/db/audit";
import { closeDb, db } from "@/lib/db/knex";
import { listCatalogue } from "@/lib/db/models";
import { createUser, findCredentialsByEmail, getUser, updateUserName } from "@/lib/db/users";
import { testDatabaseName } from "../helpers/test-database";

testDatabaseName();

afterAll(async () => {
  await closeDb();
});

describe("people and roles in the database", () => {
  it("stores an e-mail in lower case and finds it whatever the case typed", async () => {
    const id = await createUser({
      email: " Mixed.Case@Velora.test ",
      name: "Mixed Case",
      passwordHash: "unused",
      roles: ["viewer", "modeller", "viewer"],
    });
    const found = await findCredentialsByEmail("MIXED.case@velora.TEST");
    expect(found?.id).toBe(id);
    const user = await getUser(id);
    expect(user).toMatchObject({ email: "mixed.case@velora.test", roles: ["viewer", "modeller"] });
    expect(user).not.toHaveProperty("passwordHash");
  });

  it("renames a person", async () => {
    const id = await createUser({ email: "rename@velora.test", name: "Before", passwordHash: "x", roles: [] });
    await updateUserName(id, "After");
    expect((await getUser(id))?.name).toBe("After");
  });

  it("returns null for an unknown person", async () => {
    expect(await getUser(987654321)).toBeNull();
    expect(await findCredentialsByEmail("nobody@velora.test")).toBeNull();
  });
});

describe("passwords", () => {
  it("verify against their bcrypt hash and nothing else", async () => {
    const hash = await hashPassword("correct horse");
    expect(hash).toMatch(/^\$2[aby]\$12\$/);
    expect(await verifyPassword("correct horse", hash)).toBe(true);
    expect(await verifyPassword("correct horsE", hash)).toBe(false);
    expect(await verifyPassword("correct horse", null)).toBe(false);
  });
});

describe("audit events", () => {
  it("lists a person's events newest first with their detail", async () => {
    const id = await createUser({ email: "audit@velora.test", name: "Audit", passwordHash: "x", roles: ["viewer"] });
    await recordAuditEvent({ actorUserId: id, action: "first" });
    await recordAuditEvent({ actorUserId: id, action: "second", subjectType: "user", subjectId: id, detail: { k: 1 } });
    const events = await listAuditEventsByActor(id, 10);
    expect(events.map((e) => e.action)).toEqual(["second", "first"]);
    expect(events[0]).toMatchObject({ subjectType: "user", subjectId: String(id), detail: { k: 1 } });
  });
});

describe("model catalogue", () => {
  it("lists models with their setup, and forgets a model whose transaction rolled back", async () => {
    // Inside a transaction that is rolled back, so the rest of the suite never sees this model.
    const rolledBack = new Error("roll back");
    await expect(
      db().transaction(async (trx) => {
        const [setupId] = await trx("setups").insert({
          name: "Catalogue test setup (rolled back)",
          wavelength_nm: 1064,
          aperture_diameter_m: 0.26,
          beam_radius_m: 0.115,
          distance_m: 2.2e9,
          far_field_half_angle_nrad: 60,
          far_field_points_per_axis: 25,
          pupil_samples: 128,
        });
        await trx("models").insert({
          slug: "velora-ttl-rolled-back",
          name: "Velora TTL",
          setup_id: setupId,
          zernike_ordering: "noll",
          zernike_indices: JSON.stringify([4, 5, 6, 7, 8]),
        });
        const entries = await listCatalogue(trx);
        expect(entries).toContainEqual(
          expect.objectContaining({
            slug: "velora-ttl-rolled-back",
            setupName: "Catalogue test setup (rolled back)",
            wavelengthNm: 1064,
            zernikeOrdering: "noll",
            zernikeTermCount: 5,
          }),
        );
        throw rolledBack;
      }),
    ).rejects.toBe(rolledBack);
    expect((await listCatalogue()).map((entry) => entry.slug)).not.toContain("velora-ttl-rolled-back");
  });
});
