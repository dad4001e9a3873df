// The demo sheets' figures (invented): calibrations, pins and the photo's wheelbase measurement,
// as plain data computed from the design, so tests can check them without a database.
import { MM_PER_IN, measureBetweenPins, parseModelScale, prototypeToModel } from '@shared/engine';
import type { Measurement, Pin, SheetCalibrationDto, SheetPointDto } from '@shared/api';
import { engineCalibration } from '../services/sheets';
import {
  demoModelScale,
  kestrelFrame,
  kestrelHornblock,
  kestrelHornStay,
  kestrelPrototype,
  S2,
  s1px,
  s2px,
  WHEEL_R,
} from './kestrel-design';
import { buildDemoPhotoJpeg } from './photo';

export interface DemoSheetFigures {
  frame: { calibration: SheetCalibrationDto; pins: Pin[]; mmPerPx: number };
  details: { calibration: SheetCalibrationDto; pins: Pin[]; mmPerPx: number };
  photo: {
    calibration: SheetCalibrationDto;
    pins: Pin[];
    measurements: Measurement[];
    /** The wheelbase between the two hub pins: on the prototype, and brought to the model. */
    wheelbase: {
      prototypeMm: number;
      prototypeUncertaintyMm: number;
      modelMm: number;
      modelUncertaintyMm: number;
      modelIn: number;
    };
  };
}

/** Everything the demo sheets carry, as plain data (no database needed). */
export function demoSheetFigures(toPhoto = buildDemoPhotoJpeg().toPhoto): DemoSheetFigures {
  const f = kestrelFrame;
  const front = s1px(0, 0);
  const rear = s1px(f.lengthIn, 0);
  const frame: DemoSheetFigures['frame'] = {
    calibration: {
      method: 'two-point',
      reference: {
        a: front,
        b: rear,
        length: '30 1/4 in',
        lengthMm: f.lengthIn * MM_PER_IN,
        tolMm: 0,
      },
      checks: [
        {
          a: { x: rear.x, y: rear.y },
          b: s1px(f.lengthIn, f.depthIn - 1),
          length: '3 1/2 in',
          lengthMm: 3.5 * MM_PER_IN,
          tolMm: 0,
        },
      ],
      modelScale: null,
      pickErrorPx: 2,
    },
    pins: [
      { id: 'k1-front-top', ...front, label: 'front end, top edge' },
      { id: 'k1-rear-top', ...rear, label: 'rear end, top edge' },
      { id: 'k1-axle-1', ...s1px(f.axlesIn[0], f.depthIn), label: 'leading axle centre line' },
      { id: 'k1-axle-2', ...s1px(f.axlesIn[1], f.depthIn), label: 'trailing axle centre line' },
      {
        id: 'k1-stretcher-rear',
        ...s1px(f.stretchers[2].u, f.stretchers[2].v[0]),
        label: 'rear stretcher hole (position along not dimensioned)',
      },
    ],
    mmPerPx: MM_PER_IN / 50,
  };

  const h = kestrelHornblock;
  const hbLeft = s2px(S2.hbX, S2.hbY);
  const hbRight = s2px(S2.hbX + h.widthIn * S2.ptPerIn, S2.hbY);
  const hbHole = (side: number, v: number) =>
    s2px(S2.hbX + S2.ptPerIn * (h.widthIn / 2 + side * h.holeOffsetIn), S2.hbY + S2.ptPerIn * v);
  const st = kestrelHornStay;
  const stayHole = (side: number) =>
    s2px(
      S2.stayX + S2.ptPerIn * (st.lengthIn / 2 + (side * st.holeCentresIn) / 2),
      S2.stayY + S2.ptPerIn * st.holeVIn,
    );
  const details: DemoSheetFigures['details'] = {
    calibration: {
      method: 'two-point',
      reference: {
        a: hbLeft,
        b: hbRight,
        length: '3 1/4 in',
        lengthMm: h.widthIn * MM_PER_IN,
        tolMm: 0,
      },
      checks: [
        {
          a: hbLeft,
          b: s2px(S2.hbX, S2.hbY + h.heightIn * S2.ptPerIn),
          length: '2 3/4 in',
          lengthMm: h.heightIn * MM_PER_IN,
          tolMm: 0,
        },
      ],
      modelScale: null,
      pickErrorPx: 2,
    },
    pins: [
      { id: 'k2-hb-left', ...hbLeft, label: 'hornblock, top left corner' },
      { id: 'k2-hb-right', ...hbRight, label: 'hornblock, top right corner' },
      {
        id: 'k2-hb-hole-1',
        ...hbHole(-1, h.holeRowsIn[0]),
        label: 'hornblock bolt hole, top left',
      },
      { id: 'k2-stay-hole-1', ...stayHole(-1), label: 'horn stay hole, left' },
      { id: 'k2-stay-hole-2', ...stayHole(1), label: 'horn stay hole, right' },
    ],
    mmPerPx: MM_PER_IN / 150,
  };

  const p = kestrelPrototype;
  const tank = p.tankPanel;
  const corners = [
    toPhoto({ x: tank.x, y: tank.y }),
    toPhoto({ x: tank.x + tank.widthMm, y: tank.y }),
    toPhoto({ x: tank.x + tank.widthMm, y: tank.y + tank.heightMm }),
    toPhoto({ x: tank.x, y: tank.y + tank.heightMm }),
  ] as [SheetPointDto, SheetPointDto, SheetPointDto, SheetPointDto];
  const [leadingAxle, trailingAxle] = p.axlesMm;
  const leadingHub = toPhoto({ x: leadingAxle, y: p.axleYMm });
  const trailingHub = toPhoto({ x: trailingAxle, y: p.axleYMm });
  const tyreTop = toPhoto({ x: leadingAxle, y: p.axleYMm - WHEEL_R });
  const tyreBottom = toPhoto({ x: leadingAxle, y: p.axleYMm + WHEEL_R });
  const calibration: SheetCalibrationDto = {
    method: 'four-point',
    corners,
    width: p.tankPanelText.width,
    widthMm: tank.widthMm,
    height: p.tankPanelText.height,
    heightMm: tank.heightMm,
    checks: [
      {
        a: tyreTop,
        b: tyreBottom,
        length: p.wheelDiameterText,
        lengthMm: p.wheelDiameterMm,
        tolMm: 0,
      },
    ],
    modelScale: demoModelScale,
    pickErrorPx: 2,
  };
  const cal = engineCalibration(calibration);
  const measured = measureBetweenPins(cal, leadingHub, trailingHub, { pickErrorPx: 2 });
  const model = prototypeToModel(measured, parseModelScale(demoModelScale).ratio);
  const labels = ['top front', 'top rear', 'bottom rear', 'bottom front'];
  return {
    frame,
    details,
    photo: {
      calibration,
      pins: [
        ...corners.map((c, i) => ({
          id: `ph-tank-${i + 1}`,
          ...c,
          label: `side tank panel, ${labels[i]} corner`,
        })),
        { id: 'ph-hub-1', ...leadingHub, label: 'leading wheel, hub centre' },
        { id: 'ph-hub-2', ...trailingHub, label: 'trailing wheel, hub centre' },
        { id: 'ph-tyre-top', ...tyreTop, label: 'leading wheel, top of tyre' },
      ],
      measurements: [
        {
          id: 'ph-wheelbase',
          from: 'ph-hub-1',
          to: 'ph-hub-2',
          dimension: 'frame_photo_wheelbase',
        },
      ],
      wheelbase: {
        prototypeMm: measured.lengthMm,
        prototypeUncertaintyMm: measured.uncertaintyMm,
        modelMm: model.lengthMm,
        modelUncertaintyMm: model.uncertaintyMm,
        modelIn: model.lengthMm / MM_PER_IN,
      },
    },
  };
}
