/**
 * jsdom has no canvas, so uPlot itself cannot draw here. This stand-in records what each chart was given
 * (options and data), which is what the portal controls; the real drawing is seen in the Chromium tests.
 */
export interface RecordedChart {
  options: { series: Array<{ label?: string }>; bands?: Array<{ series: [number, number] }>; height: number };
  data: Array<Array<number | null>>;
  destroyed: boolean;
}

export const charts: RecordedChart[] = [];

export default class FakeUPlot {
  private readonly record: RecordedChart;
  constructor(options: RecordedChart["options"], data: RecordedChart["data"], target: HTMLElement) {
    this.record = { options, data, destroyed: false };
    charts.push(this.record);
    target.appendChild(document.createElement("canvas")).setAttribute("data-fake-uplot", String(charts.length - 1));
  }
  setSize() {}
  destroy() {
    this.record.destroyed = true;
  }
}
