import type { Metadata } from "next";
import Link from "next/link";
import { buttonLinkClass, EmptyState, linkClass, tdClass, thClass } from "@/components/empty-state";
import { formatNumber, formatTime } from "@/components/format";
import { PageHeading } from "@/components/page-heading";
import { requirePageActor } from "@/components/server/page";
import { can } from "@/lib/access/actor";
import { listSetups } from "@/lib/db/setups";

export const metadata: Metadata = { title: "Setups" };

export default async function SetupsPage() {
  const { actor } = await requirePageActor();
  const setups = await listSetups(actor, { limit: 500, cursor: null });
  const mayTrain = can(actor, "train");
  return (
    <section aria-labelledby="setups-heading">
      <PageHeading id="setups-heading" title="Optical setups">
        {mayTrain && (
          <Link href="/setups/new" className={buttonLinkClass}>
            New setup
          </Link>
        )}
      </PageHeading>
      {setups.items.length === 0 ? (
        <EmptyState title="No optical setups yet." testId="setups-empty">
          {mayTrain ? (
            <>
              A setup fixes wavelength, aperture, beam, distance and the far-field grid;{" "}
              <Link href="/setups/new" className={linkClass}>
                define the first one
              </Link>
              .
            </>
          ) : (
            "A modeller defines setups; they appear here."
          )}
        </EmptyState>
      ) : (
        <div className="overflow-x-auto">
          <table className="w-full border-collapse bg-surface text-sm" data-testid="setups-table">
            <caption className="sr-only">Optical setups with their derived quantities</caption>
            <thead>
              <tr className="border-b border-line text-left text-xs text-muted">
                <th scope="col" className={thClass}>Name</th>
                <th scope="col" className={`${thClass} text-right`}>λ (nm)</th>
                <th scope="col" className={`${thClass} text-right`}>D (m)</th>
                <th scope="col" className={`${thClass} text-right`}>w (m)</th>
                <th scope="col" className={`${thClass} text-right`}>L (m)</th>
                <th scope="col" className={`${thClass} text-right`}>Far field</th>
                <th scope="col" className={`${thClass} text-right`}>Pupil</th>
                <th scope="col" className={`${thClass} text-right`}>λ/D (nrad)</th>
                <th scope="col" className={`${thClass} text-right`}>w/R</th>
                <th scope="col" className={`${thClass} text-right`}>Fresnel no.</th>
                <th scope="col" className={`${thClass} text-right`}>On-axis gain</th>
                <th scope="col" className={thClass}>Created (UTC)</th>
                {mayTrain && <th scope="col" className={thClass}><span className="sr-only">Actions</span></th>}
              </tr>
            </thead>
            <tbody className="font-mono text-xs">
              {setups.items.map(({ id, name, setup, derived, createdAt }) => (
                <tr key={id} className="border-b border-line last:border-0" data-setup={name}>
                  <td className={`${tdClass} font-sans text-sm`}>{name}</td>
                  <td className={`${tdClass} text-right`}>{formatNumber(setup.wavelengthNm, 6)}</td>
                  <td className={`${tdClass} text-right`}>{formatNumber(setup.apertureDiameterM)}</td>
                  <td className={`${tdClass} text-right`}>{formatNumber(setup.beamRadiusM)}</td>
                  <td className={`${tdClass} text-right`}>{formatNumber(setup.distanceM, 3)}</td>
                  <td className={`${tdClass} text-right`}>
                    ±{formatNumber(setup.farField.halfAngleNrad)} nrad, {setup.farField.pointsPerAxis}²
                  </td>
                  <td className={`${tdClass} text-right`}>{setup.pupilSamples}²</td>
                  <td className={`${tdClass} text-right`}>{formatNumber(derived.diffractionAngleNrad)}</td>
                  <td className={`${tdClass} text-right`}>{formatNumber(derived.beamToApertureRatio)}</td>
                  <td className={`${tdClass} text-right`}>{formatNumber(derived.fresnelNumber, 3)}</td>
                  <td className={`${tdClass} text-right`}>{formatNumber(derived.onAxisGain)}</td>
                  <td className={tdClass}>{formatTime(createdAt)}</td>
                  {mayTrain && (
                    <td className={`${tdClass} font-sans`}>
                      <Link href={`/models/new?setupId=${id}`} className={linkClass}>
                        New model on it
                      </Link>
                    </td>
                  )}
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </section>
  );
}
