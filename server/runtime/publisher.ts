/**
 * Aspect commands to the boards: retained QoS 1 on `…/signal/{id}/aspect` with
 * `{aspect, rev, at}` (CONTRACT.md §2). Retained, so a board that (re)connects gets the
 * newest command for each of its signals at once.
 */
import type { MqttClient } from "mqtt";
import { topics, type AspectPayload } from "../../shared/contract/live";
import type { Aspect } from "../../shared/rulebook/schema";

export interface AspectPublisher {
  publishAspect(slug: string, signal: string, aspect: Aspect, rev: number, at: number): void;
}

export function mqttAspectPublisher(client: MqttClient, onError: (err: Error) => void): AspectPublisher {
  return {
    publishAspect(slug, signal, aspect, rev, at) {
      const payload: AspectPayload = { aspect, rev, at: new Date(at).toISOString() };
      client.publish(topics.aspect(slug, signal), JSON.stringify(payload), { qos: 1, retain: true }, (err) => {
        if (err) onError(err);
      });
    },
  };
}
