import { RateLimiterMemory, RateLimiterRedis, RateLimiterRes } from "rate-limiter-flexible";
import { getConfig } from "../config/index.ts";
import { queuePrefix, redisConnection } from "../queue/connection.ts";
import { SIGN_IN_WINDOW_SECONDS } from "./messages.ts";

/**
 * Failed sign-in attempts are counted per account (the normalised e-mail) and per address, each over a window of
 * SIGN_IN_WINDOW_SECONDS (lib/auth/messages.ts; rate-limiter-flexible on Redis; an in-memory count stands in while Redis is down). Once
 * either count is spent, the next attempt is refused before its password is even compared, until the window
 * ends. A successful sign-in clears the account's count. The limits are the configuration's
 * SIGN_IN_ATTEMPTS_PER_ACCOUNT and SIGN_IN_ATTEMPTS_PER_ADDRESS.
 */

interface Limiters {
  account: RateLimiterRedis;
  address: RateLimiterRedis;
}

const holder = globalThis as typeof globalThis & { __stillpointSignInLimiters?: Limiters };

function limiters(): Limiters {
  if (!holder.__stillpointSignInLimiters) {
    const config = getConfig();
    const storeClient = redisConnection("client");
    const make = (name: string, points: number) =>
      new RateLimiterRedis({
        storeClient,
        keyPrefix: `${queuePrefix()}:rate:sign-in:${name}`,
        points,
        duration: SIGN_IN_WINDOW_SECONDS,
        insuranceLimiter: new RateLimiterMemory({ points, duration: SIGN_IN_WINDOW_SECONDS }),
      });
    holder.__stillpointSignInLimiters = {
      account: make("account", config.signIn.attemptsPerAccount),
      address: make("address", config.signIn.attemptsPerAddress),
    };
  }
  return holder.__stillpointSignInLimiters;
}

/** Seconds until this account and address may try again, or 0 when an attempt is allowed now. */
export async function signInBlockedFor(account: string, address: string): Promise<number> {
  const { account: perAccount, address: perAddress } = limiters();
  const [a, b] = await Promise.all([perAccount.get(account), perAddress.get(address)]);
  const config = getConfig();
  const waits = [
    a !== null && a.consumedPoints >= config.signIn.attemptsPerAccount ? a.msBeforeNext : 0,
    b !== null && b.consumedPoints >= config.signIn.attemptsPerAddress ? b.msBeforeNext : 0,
  ];
  return Math.ceil(Math.max(...waits) / 1000);
}

/** Count a failed attempt against both the account and the address. */
export async function recordFailedSignIn(account: string, address: string): Promise<void> {
  const { account: perAccount, address: perAddress } = limiters();
  const swallow = (rejection: unknown) => {
    if (!(rejection instanceof RateLimiterRes)) throw rejection;
  };
  await Promise.all([perAccount.consume(account).catch(swallow), perAddress.consume(address).catch(swallow)]);
}

/** A successful sign-in forgets the account's failures (the address keeps its count). */
export async function clearSignInFailures(account: string): Promise<void> {
  await limiters().account.delete(account);
}
