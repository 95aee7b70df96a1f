"use client";
import { useActionState } from "react";
import { addInstrumentAction, addObjectiveAction } from "../actions";
import type { ActionState } from "@/contracts/action-state";
import { FormFeedback } from "@/components/form-feedback";

export function AddInstrumentForm() {
  const [state, action, pending] = useActionState<ActionState, FormData>(addInstrumentAction, {});
  return (
    <form action={action} className="grid gap-3 md:grid-cols-4">
      <div className="md:col-span-2">
        <label className="label" htmlFor="inst-name">
          Name
        </label>
        <input id="inst-name" name="name" className="field" required maxLength={120} />
      </div>
      <div>
        <label className="label" htmlFor="inst-modality">
          Modality
        </label>
        <select id="inst-modality" name="modality" className="field" defaultValue="confocal">
          <option value="widefield">widefield</option>
          <option value="confocal">point-scanning confocal</option>
          <option value="spinning-disk">spinning-disk confocal</option>
          <option value="two-photon">two-photon</option>
          <option value="light-sheet">light-sheet</option>
        </select>
      </div>
      <div>
        <label className="label" htmlFor="inst-stand">
          Stand
        </label>
        <select id="inst-stand" name="stand" className="field">
          <option value="inverted">inverted</option>
          <option value="upright">upright</option>
        </select>
      </div>
      <div>
        <label className="label" htmlFor="inst-serial">
          Serial number
        </label>
        <input id="inst-serial" name="serialNumber" className="field" />
      </div>
      <div>
        <label className="label" htmlFor="inst-location">
          Room
        </label>
        <input id="inst-location" name="location" className="field" />
      </div>
      <div>
        <label className="label" htmlFor="inst-pinhole">
          Default pinhole (AU)
        </label>
        <input
          id="inst-pinhole"
          name="defaultPinholeAu"
          type="number"
          step="0.1"
          min="0.1"
          className="field"
        />
      </div>
      <div className="flex items-end">
        <button className="btn" disabled={pending}>
          Add instrument
        </button>
      </div>
      <div className="md:col-span-4">
        <FormFeedback state={state} />
      </div>
    </form>
  );
}

export function AddObjectiveForm({ instruments }: { instruments: Array<{ id: string; name: string }> }) {
  const [state, action, pending] = useActionState<ActionState, FormData>(addObjectiveAction, {});
  return (
    <form action={action} className="grid gap-3 md:grid-cols-4">
      <div className="md:col-span-2">
        <label className="label" htmlFor="obj-name">
          Name
        </label>
        <input id="obj-name" name="name" className="field" required placeholder="e.g. 60× / 1.20 water" />
      </div>
      <div className="md:col-span-2">
        <label className="label" htmlFor="obj-inst">
          Mounted on
        </label>
        <select id="obj-inst" name="instrumentId" className="field">
          <option value="">(not mounted)</option>
          {instruments.map((i) => (
            <option key={i.id} value={i.id}>
              {i.name}
            </option>
          ))}
        </select>
      </div>
      <div>
        <label className="label" htmlFor="obj-mag">
          Magnification (×)
        </label>
        <input
          id="obj-mag"
          name="magnification"
          type="number"
          step="any"
          min="1"
          className="field"
          required
        />
      </div>
      <div>
        <label className="label" htmlFor="obj-na">
          NA
        </label>
        <input
          id="obj-na"
          name="na"
          type="number"
          step="0.01"
          min="0.05"
          max="1.7"
          className="field"
          required
        />
      </div>
      <div>
        <label className="label" htmlFor="obj-imm">
          Immersion
        </label>
        <select id="obj-imm" name="immersion" className="field">
          <option value="air">air (dry)</option>
          <option value="water">water</option>
          <option value="glycerol">glycerol</option>
          <option value="silicone">silicone oil</option>
          <option value="oil">oil</option>
        </select>
      </div>
      <div>
        <label className="label" htmlFor="obj-ri">
          Design immersion RI
        </label>
        <input
          id="obj-ri"
          name="designImmersionRi"
          type="number"
          step="0.001"
          min="1"
          max="1.8"
          className="field"
          placeholder="from immersion"
        />
      </div>
      <div>
        <label className="label" htmlFor="obj-cs">
          Design coverslip (µm)
        </label>
        <input
          id="obj-cs"
          name="designCoverslipUm"
          type="number"
          step="1"
          min="0"
          defaultValue={170}
          className="field"
        />
      </div>
      <div>
        <label className="label" htmlFor="obj-serial">
          Serial number
        </label>
        <input id="obj-serial" name="serialNumber" className="field" />
      </div>
      <div>
        <label className="label" htmlFor="obj-int">
          Check interval (days)
        </label>
        <input
          id="obj-int"
          name="checkIntervalDays"
          type="number"
          min="1"
          defaultValue={30}
          className="field"
        />
      </div>
      <div className="flex items-end">
        <button className="btn" disabled={pending}>
          Add objective
        </button>
      </div>
      <div className="md:col-span-4">
        <FormFeedback state={state} />
      </div>
    </form>
  );
}
